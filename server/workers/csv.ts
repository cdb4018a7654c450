import { setPriority } from 'node:os'
import { parentPort } from 'node:worker_threads'
import { runCsvJob, type CsvJob } from '../utils/measure/csvParse'

// The worker thread that parses and checks an uploaded CSV (server/utils/measure/csv.ts starts
// one per job). Built on its own by the nitro hook in nuxt.config.ts into
// .output/server/workers/csv.mjs; one job in, its result (or the error's message) out.

// On Linux a thread has its own nice value: this one yields the CPU to the server's main thread,
// which answers every other request, whenever both want it.
try {
  setPriority(10)
}
catch { /* not permitted here: the worker runs at the server's priority */ }

parentPort!.once('message', (job: CsvJob) => {
  try {
    parentPort!.postMessage({ ok: true, result: runCsvJob(job) })
  }
  catch (err) {
    parentPort!.postMessage({ ok: false, message: err instanceof Error ? err.message : String(err) })
  }
})
