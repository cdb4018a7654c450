// The backup folder's layout, shared by scripts/backup.ts and scripts/restore.ts:
//   DIR/database.dump   pg_dump's custom format
//   DIR/files/ab/<uuid> the file store's bytes, under their storage keys
//   DIR/manifest.json   written last: a folder without it is an unfinished backup
import { spawn } from 'node:child_process'
import { createHash } from 'node:crypto'
import { createReadStream, createWriteStream } from 'node:fs'
import { mkdir } from 'node:fs/promises'
import { dirname } from 'node:path'
import { Transform } from 'node:stream'
import { pipeline } from 'node:stream/promises'

export const FORMAT = 'ratchet-backup'
export const VERSION = 1

export interface BackupManifest {
  format: typeof FORMAT
  version: number
  createdAt: string
  /** the newest migration the database had */
  migration: string | null
  database: { file: string, bytes: number, sha256: string }
  /** missing: storage keys the database lists whose bytes were not in the store */
  files: { count: number, bytes: number, list: { key: string, size: number, sha256: string }[], missing: string[] }
}

/** Storage keys as the app makes them ("ab/<uuid>"): nothing else is read or written. */
export const STORAGE_KEY = /^[0-9a-f]{2}\/[0-9a-f-]{36}$/

/** Copies `from` to `to` (making its folder), returning the bytes' size and sha256. */
export async function copyHashed(from: string, to: string): Promise<{ size: number, sha256: string }> {
  await mkdir(dirname(to), { recursive: true })
  const hash = createHash('sha256')
  let size = 0
  await pipeline(createReadStream(from), new Transform({
    transform(chunk: Buffer, _enc, done) {
      hash.update(chunk)
      size += chunk.length
      done(null, chunk)
    },
  }), createWriteStream(to, { flags: 'wx' }))
  return { size, sha256: hash.digest('hex') }
}

export async function sha256Of(path: string): Promise<{ size: number, sha256: string }> {
  const hash = createHash('sha256')
  let size = 0
  for await (const chunk of createReadStream(path)) {
    hash.update(chunk as Buffer)
    size += (chunk as Buffer).length
  }
  return { size, sha256: hash.digest('hex') }
}

/** pg_dump and pg_restore read the password from the environment, not the command line. */
export function pgConnection(url: string): { args: string[], env: NodeJS.ProcessEnv } {
  const u = new URL(url)
  return {
    args: ['-h', u.hostname, '-p', u.port || '5432', '-U', decodeURIComponent(u.username), '-d', decodeURIComponent(u.pathname.slice(1))],
    env: { ...process.env, PGPASSWORD: decodeURIComponent(u.password), PGCONNECT_TIMEOUT: '10' },
  }
}

/** Prints "<tool>: message" and exits with `code`. */
export function failWith(tool: string) {
  return (message: string, code = 1): never => {
    console.error(`${tool}: ${message}`)
    process.exit(code)
  }
}

/** Runs a command (pg_dump, pg_restore) with its output passed through; rejects on a non-zero exit. */
export function run(cmd: string, args: string[], env: NodeJS.ProcessEnv): Promise<void> {
  return new Promise((done, failed) => {
    const child = spawn(cmd, args, { env, stdio: ['ignore', 'inherit', 'inherit'] })
    child.on('error', failed)
    child.on('exit', code => (code === 0 ? done() : failed(new Error(`${cmd} exited with ${code}`))))
  })
}
