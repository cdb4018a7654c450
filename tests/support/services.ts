import { spawn } from 'node:child_process'
import { appendFileSync, closeSync, openSync, readFileSync } from 'node:fs'
import { BASE_URL, MAILDEV_URL, ROOT } from './env'

// Stopping and starting the servers that scripts/test.sh started, for tests of what survives a
// restart or an outage. Servers started here are stopped by scripts/test.sh at the end.

let appPid = Number(process.env.RATCHET_TEST_APP_PID)
let maildevPid = Number(process.env.RATCHET_TEST_MAILDEV_PID)

async function until(check: () => Promise<boolean>, what: string, ms = 30_000) {
  const deadline = Date.now() + ms
  while (Date.now() < deadline) {
    if (await check().catch(() => false)) return
    await new Promise(r => setTimeout(r, 200))
  }
  throw new Error(`timed out: ${what}`)
}

const alive = (pid: number) => {
  try {
    process.kill(pid, 0)
    return true
  }
  catch {
    return false
  }
}

async function stop(pid: number, what: string) {
  try {
    process.kill(-pid, 'SIGTERM')
  }
  catch {
    try { process.kill(pid, 'SIGTERM') }
    catch { /* already gone */ }
  }
  await until(async () => !alive(pid), `${what} to stop`)
}

function launch(cmd: string, args: string[], env: NodeJS.ProcessEnv, output: number | 'ignore' = 'ignore'): number {
  const child = spawn(cmd, args, { cwd: ROOT, env, detached: true, stdio: ['ignore', output, output] })
  child.unref()
  appendFileSync(process.env.RATCHET_TEST_PIDFILE!, `${child.pid}\n`)
  return child.pid!
}

export async function stopMaildev() {
  await stop(maildevPid, 'maildev')
}

export async function startMaildev() {
  maildevPid = launch(process.execPath, [`${ROOT}node_modules/maildev/dist/bin/maildev.js`,
    '--smtp', process.env.RATCHET_TEST_SMTP_PORT!, '--ip', '127.0.0.1', '--web', process.env.RATCHET_TEST_MAIL_WEB_PORT!,
    '--web-ip', '127.0.0.1', '--mail-directory', `${ROOT}.data/test/mail`, '--silent'], process.env)
  await until(async () => (await fetch(`${MAILDEV_URL}/api/healthz`)).ok, 'maildev to answer')
}

export async function stopApp() {
  await stop(appPid, 'the app')
}

export async function startApp() {
  appPid = launch(process.execPath, [`${ROOT}.output/server/index.mjs`],
    { ...process.env, HOST: '127.0.0.1', PORT: process.env.RATCHET_TEST_APP_PORT })
  await until(async () => (await fetch(`${BASE_URL}/api/health`)).ok, 'the app to answer')
}

/** A second app server on another port, sharing the database and the queue; `env` adds to or overrides the first's. */
export async function startSecondApp(port: number, env: Record<string, string> = {}): Promise<() => Promise<void>> {
  const pid = launch(process.execPath, [`${ROOT}.output/server/index.mjs`], { ...process.env, ...env, HOST: '127.0.0.1', PORT: String(port) })
  await until(async () => (await fetch(`http://127.0.0.1:${port}/api/health`)).ok, 'the second app to answer')
  return () => stop(pid, 'the second app')
}

/**
 * s3rver (an S3-compatible server keeping its buckets in `dir`) on 127.0.0.1:`port`, its log in
 * `log`. Its one key pair is S3RVER / S3RVER.
 */
export async function startS3rver(port: number, dir: string, log: string): Promise<() => Promise<void>> {
  const out = openSync(log, 'a')
  const pid = launch(process.execPath, [`${ROOT}node_modules/s3rver/bin/s3rver.js`, '--directory', dir, '--address', '127.0.0.1', '--port', String(port), '--no-vhost-buckets'],
    process.env, out)
  closeSync(out)
  // any answer will do (an unsigned request to the service root is an error document)
  await until(async () => (await fetch(`http://127.0.0.1:${port}/`)).status > 0, 's3rver to answer')
  return () => stop(pid, 's3rver')
}

export function pidsStarted(): number[] {
  return readFileSync(process.env.RATCHET_TEST_PIDFILE!, 'utf8').split('\n').filter(Boolean).map(Number)
}
