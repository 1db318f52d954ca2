import { createHash, randomUUID } from 'node:crypto'
import fs from 'node:fs/promises'
import { createReadStream } from 'node:fs'
import path from 'node:path'
import type { Readable } from 'node:stream'

/** Where file bytes live. Local disk by default; an object-store driver implements the same four calls. */
export interface StorageDriver {
  put(key: string, data: Buffer): Promise<void>
  get(key: string): Promise<Buffer>
  stream(key: string): Promise<Readable>
  exists(key: string): Promise<boolean>
}

/** Files under one folder, written to a temporary name and renamed so a reader never sees half a file. */
export class LocalDiskStorage implements StorageDriver {
  constructor(private readonly root: string) {}

  private resolve(key: string): string {
    const full = path.resolve(this.root, key)
    if (!full.startsWith(path.resolve(this.root) + path.sep)) throw new Error(`storage key escapes the storage folder: ${key}`)
    return full
  }

  async put(key: string, data: Buffer): Promise<void> {
    const full = this.resolve(key)
    await fs.mkdir(path.dirname(full), { recursive: true })
    const tmp = `${full}.${randomUUID()}.tmp`
    await fs.writeFile(tmp, data, { flag: 'wx' })
    await fs.rename(tmp, full)
  }

  async get(key: string): Promise<Buffer> {
    return fs.readFile(this.resolve(key))
  }

  async stream(key: string): Promise<Readable> {
    const full = this.resolve(key)
    await fs.access(full)
    return createReadStream(full)
  }

  async exists(key: string): Promise<boolean> {
    try {
      await fs.access(this.resolve(key))
      return true
    } catch {
      return false
    }
  }
}

export interface StoredFile {
  key: string
  sha256: string
  size: number
}

/** The one storage service: content-addressed keys, SHA-256 computed on the way in and checked on the way out. */
export class StorageService {
  constructor(private readonly driver: StorageDriver) {}

  /** Stores bytes under `<kind>/<first two hex>/<sha256>.<ext>`; identical files share one key. */
  async save(data: Buffer, kind: string, extension: string): Promise<StoredFile> {
    const sha256 = createHash('sha256').update(data).digest('hex')
    const key = `${kind}/${sha256.slice(0, 2)}/${sha256}.${extension}`
    if (!(await this.driver.exists(key))) await this.driver.put(key, data)
    return { key, sha256, size: data.length }
  }

  /** Reads a file and proves it is the one recorded: a changed byte on disk is an error, not a silent wrong file. */
  async read(key: string, expectedSha256: string): Promise<Buffer> {
    const data = await this.driver.get(key)
    const actual = createHash('sha256').update(data).digest('hex')
    if (actual !== expectedSha256) throw new Error(`stored file ${key} does not match its recorded SHA-256`)
    return data
  }

  stream(key: string): Promise<Readable> {
    return this.driver.stream(key)
  }
}
