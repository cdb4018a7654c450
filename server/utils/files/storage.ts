import { randomUUID } from 'node:crypto'
import { createReadStream, promises as fsp } from 'node:fs'
import { join, resolve } from 'node:path'
import type { Readable } from 'node:stream'
import fsDriver from 'unstorage/drivers/fs'
import { S3Store, type S3Config } from './s3'

// Where the bytes of evidence files live, behind one interface that streams both ways.
//
// - `fs` (the default): unstorage's filesystem driver under `files.dir` (an ignored folder,
//   .data/files). Its setItemRaw hands the value to fs.promises.writeFile, which consumes a
//   stream chunk by chunk, so uploads go through it. Its getItemRaw reads a whole file into
//   memory, so downloads open a read stream (with the byte range) on the same path instead.
// - `s3`: an S3-compatible bucket (server/utils/s3.ts), multipart upload and ranged GET.
//
// Keys are made by the server ("ab/<uuid>"); a key of any other shape is refused here too.

export interface FilesConfig {
  driver: string
  dir: string
  maxBytes: number
  teamQuotaBytes: number
  s3: S3Config
}

export interface StoredObject {
  key: string
  modifiedAt: Date
}

export interface FileStore {
  readonly driver: string
  /** Stores the stream under `key`. When it rejects, part of the bytes may be there: call remove. */
  put(key: string, body: Readable): Promise<void>
  /** The bytes, or the inclusive byte range of them. */
  get(key: string, range?: { start: number, end: number }): Promise<Readable>
  /** Removes the bytes; a missing key is not an error. */
  remove(key: string): Promise<void>
  /** Every stored key with its last change, for the sweep. */
  list(): AsyncIterable<StoredObject>
}

const KEY = /^[0-9a-f]{2}\/[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/

export function assertStorageKey(key: string): string {
  if (!KEY.test(key)) throw new Error(`Not a storage key: ${JSON.stringify(key)}`)
  return key
}

/** A fresh storage key: two characters of fan-out, then a random uuid. */
export function newStorageKey(): string {
  const id = randomUUID()
  return `${id.slice(0, 2)}/${id}`
}

class FsStore implements FileStore {
  readonly driver = 'fs'
  private base: string
  private unstorage: ReturnType<typeof fsDriver>

  constructor(dir: string) {
    this.base = resolve(dir)
    this.unstorage = fsDriver({ base: this.base })
  }

  async put(key: string, body: Readable) {
    await this.unstorage.setItemRaw!(assertStorageKey(key), body, {})
  }

  async get(key: string, range?: { start: number, end: number }) {
    const path = join(this.base, assertStorageKey(key))
    // open first, so a missing file is an error here rather than on the response stream
    const handle = await fsp.open(path, 'r')
    return createReadStream(path, { fd: handle, highWaterMark: 1024 * 1024, ...(range ?? {}) })
  }

  async remove(key: string) {
    await this.unstorage.removeItem!(assertStorageKey(key), {})
  }

  async* list() {
    const keys = (await this.unstorage.getKeys('', {})) as string[]
    for (const raw of keys) {
      const key = raw.replace(/:/g, '/')
      if (!KEY.test(key)) continue
      const stat = await fsp.stat(join(this.base, key)).catch(() => null)
      if (stat) yield { key, modifiedAt: stat.mtime }
    }
  }
}

class S3FileStore implements FileStore {
  readonly driver = 's3'
  private s3: S3Store
  constructor(config: S3Config) {
    this.s3 = new S3Store(config)
  }

  put(key: string, body: Readable) { return this.s3.put(assertStorageKey(key), body) }
  get(key: string, range?: { start: number, end: number }) { return this.s3.get(assertStorageKey(key), range) }
  remove(key: string) { return this.s3.remove(assertStorageKey(key)) }

  // the bucket may hold objects of others: only keys of this store's shape are its own
  async* list() {
    for await (const o of this.s3.list()) {
      if (KEY.test(o.key)) yield o
    }
  }
}

/** A store for the given settings (scripts and tests build one from their own settings). */
export function createFileStore(config: { driver: string, dir: string, s3?: S3Config }): FileStore {
  if (config.driver === 's3') {
    if (!config.s3) throw new Error('files.driver is "s3" but files.s3 is not set')
    return new S3FileStore(config.s3)
  }
  if (config.driver !== 'fs') throw new Error(`files.driver is "fs" or "s3", not "${config.driver}"`)
  return new FsStore(config.dir || '.data/files')
}

const positive = (v: unknown, fallback: number) => {
  const n = Number(v)
  return Number.isFinite(n) && n >= 0 ? n : fallback
}

/** The files settings from the runtime config (NUXT_FILES_* variables), numbers coerced. */
export function filesConfig(): FilesConfig {
  const c = useRuntimeConfig().files as Partial<FilesConfig> & { s3?: Partial<S3Config> }
  return {
    driver: String(c.driver || 'fs'),
    dir: String(c.dir || '.data/files'),
    maxBytes: positive(c.maxBytes, 200_000_000),
    teamQuotaBytes: positive(c.teamQuotaBytes, 0),
    s3: {
      endpoint: String(c.s3?.endpoint ?? ''),
      bucket: String(c.s3?.bucket ?? ''),
      region: String(c.s3?.region || 'us-east-1'),
      accessKeyId: String(c.s3?.accessKeyId ?? ''),
      secretAccessKey: String(c.s3?.secretAccessKey ?? ''),
    },
  }
}

let store: FileStore | undefined

/** The file store of this server process. */
export function useFileStore(): FileStore {
  store ??= createFileStore(filesConfig())
  return store
}

/** The same settings from NUXT_FILES_* variables, for scripts and tests outside the server. */
export function filesConfigFromEnv(env: Record<string, string | undefined> = process.env): FilesConfig {
  return {
    driver: env.NUXT_FILES_DRIVER || 'fs',
    dir: env.NUXT_FILES_DIR || '.data/files',
    maxBytes: positive(env.NUXT_FILES_MAX_BYTES, 200_000_000),
    teamQuotaBytes: positive(env.NUXT_FILES_TEAM_QUOTA_BYTES, 10_000_000_000),
    s3: {
      endpoint: env.NUXT_FILES_S3_ENDPOINT ?? '',
      bucket: env.NUXT_FILES_S3_BUCKET ?? '',
      region: env.NUXT_FILES_S3_REGION || 'us-east-1',
      accessKeyId: env.NUXT_FILES_S3_ACCESS_KEY_ID ?? '',
      secretAccessKey: env.NUXT_FILES_S3_SECRET_ACCESS_KEY ?? '',
    },
  }
}
