import { readFileSync, readdirSync, readlinkSync } from 'node:fs'

// Reading a server process's memory from /proc (Linux), for the upload tests and the bench.

/** VmRSS of a process, in bytes. */
export function rssOf(pid: number): number {
  const m = /VmRSS:\s+(\d+)\s+kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'))
  if (!m) throw new Error(`no VmRSS for process ${pid}`)
  return Number(m[1]) * 1024
}

/** Samples a process's RSS every `ms` until stopped; `stop` returns the peak. */
export function watchRss(pid: number, ms = 20) {
  let peak = rssOf(pid)
  const timer = setInterval(() => {
    try { peak = Math.max(peak, rssOf(pid)) }
    catch { /* the process is gone */ }
  }, ms)
  return {
    stop: () => {
      clearInterval(timer)
      return peak
    },
  }
}

/**
 * The process listening on a local TCP port (a server may have been restarted by another test,
 * so a PID handed down at start can be stale): the socket's inode from /proc/net/tcp, then the
 * process holding it. Null when none of the caller's processes does.
 */
export function listeningPid(port: number): number | null {
  const hex = port.toString(16).toUpperCase().padStart(4, '0')
  const inodes = new Set<string>()
  for (const table of ['/proc/net/tcp', '/proc/net/tcp6']) {
    let text = ''
    try { text = readFileSync(table, 'utf8') }
    catch { continue }
    for (const line of text.split('\n').slice(1)) {
      const cols = line.trim().split(/\s+/)
      // local_address is ADDR:PORT in hex; state 0A is LISTEN; the inode is the 10th column
      if (cols[1]?.endsWith(`:${hex}`) && cols[3] === '0A' && cols[9]) inodes.add(cols[9])
    }
  }
  if (inodes.size === 0) return null
  for (const pid of readdirSync('/proc').filter(d => /^\d+$/.test(d))) {
    let fds: string[]
    try { fds = readdirSync(`/proc/${pid}/fd`) }
    catch { continue }
    for (const fd of fds) {
      let link = ''
      try { link = readlinkSync(`/proc/${pid}/fd/${fd}`) }
      catch { continue }
      const m = /^socket:\[(\d+)\]$/.exec(link)
      if (m && inodes.has(m[1]!)) return Number(pid)
    }
  }
  return null
}
