/**
 * The object store (S3-compatible; s3rver locally). The app reaches it only through @aws-sdk/client-s3.
 * Checksum options are 'WHEN_REQUIRED' because the SDK's default aws-chunked uploads are stored with their chunk
 * framing by s3rver (STACK.md gotcha 8); real S3 accepts both.
 */
import {
  AbortMultipartUploadCommand,
  CompleteMultipartUploadCommand,
  CreateBucketCommand,
  CreateMultipartUploadCommand,
  DeleteObjectCommand,
  GetObjectCommand,
  HeadBucketCommand,
  HeadObjectCommand,
  ListObjectsCommand,
  PutObjectCommand,
  S3Client,
  UploadPartCommand,
} from '@aws-sdk/client-s3'
import { Upload } from '@aws-sdk/lib-storage'
import { createWriteStream } from 'node:fs'
import { open } from 'node:fs/promises'
import type { Readable } from 'node:stream'
import { pipeline } from 'node:stream/promises'
import type { AppConfig } from '../config'

process.env.AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED ??= 'true'

export interface ObjectStore {
  bucket: string
  put(key: string, body: Buffer | Readable, contentType: string): Promise<void>
  /**
   * Store a file from disk through one reused buffer of FILE_PART_BYTES (in parts, one at a time, when larger): a
   * stream through `put` would allocate every chunk and part anew, which a server process holds on to for a while.
   */
  putFile(key: string, path: string, contentType: string): Promise<void>
  get(key: string): Promise<Buffer>
  /**
   * Stream an object into a new file at `path` (owner-only), never holding it whole: for large originals that are
   * read range by range afterwards. A partial file is left for the caller to remove when the transfer fails.
   */
  getToFile(key: string, path: string): Promise<void>
  exists(key: string): Promise<boolean>
  remove(key: string): Promise<void>
  list(prefix?: string): Promise<string[]>
  /** Every object with its size and last-modified time. */
  listDetailed(prefix?: string): Promise<{ key: string; size: number; lastModified: Date }[]>
  ensureBucket(): Promise<void>
  ping(): Promise<void>
  close(): void
}

/** S3's smallest multipart part, and the most memory a file upload holds. */
export const FILE_PART_BYTES = 5 * 1024 * 1024

export function createObjectStore(config: AppConfig['s3']): ObjectStore {
  const client = new S3Client({
    endpoint: config.endpoint,
    region: config.region,
    forcePathStyle: config.forcePathStyle,
    credentials: { accessKeyId: config.accessKeyId, secretAccessKey: config.secretAccessKey },
    requestChecksumCalculation: 'WHEN_REQUIRED',
    responseChecksumValidation: 'WHEN_REQUIRED',
    maxAttempts: 2,
  })
  const Bucket = config.bucket
  return {
    bucket: Bucket,
    async put(key, body, contentType) {
      await new Upload({ client, params: { Bucket, Key: key, Body: body, ContentType: contentType } }).done()
    },
    async putFile(key, path, contentType) {
      const handle = await open(path, 'r')
      try {
        const { size } = await handle.stat()
        const buffer = Buffer.allocUnsafe(Math.max(1, Math.min(size, FILE_PART_BYTES)))
        const readPart = async (offset: number, length: number) => {
          let filled = 0
          while (filled < length) {
            const { bytesRead } = await handle.read(buffer, filled, length - filled, offset + filled)
            if (bytesRead === 0) throw new Error(`${path} ended at ${offset + filled} of ${size} bytes while it was being stored.`)
            filled += bytesRead
          }
          return buffer.subarray(0, length)
        }
        if (size <= FILE_PART_BYTES) {
          await client.send(new PutObjectCommand({ Bucket, Key: key, Body: await readPart(0, size), ContentType: contentType }))
          return
        }
        const { UploadId } = await client.send(new CreateMultipartUploadCommand({ Bucket, Key: key, ContentType: contentType }))
        try {
          const parts: { ETag?: string; PartNumber: number }[] = []
          for (let offset = 0; offset < size; offset += FILE_PART_BYTES) {
            const PartNumber = parts.length + 1
            const Body = await readPart(offset, Math.min(FILE_PART_BYTES, size - offset))
            // Awaited before the buffer is read into again.
            const { ETag } = await client.send(new UploadPartCommand({ Bucket, Key: key, UploadId, PartNumber, Body }))
            parts.push({ ETag, PartNumber })
          }
          await client.send(new CompleteMultipartUploadCommand({ Bucket, Key: key, UploadId, MultipartUpload: { Parts: parts } }))
        } catch (err) {
          await client.send(new AbortMultipartUploadCommand({ Bucket, Key: key, UploadId })).catch(() => {})
          throw err
        }
      } finally {
        await handle.close()
      }
    },
    async get(key) {
      const out = await client.send(new GetObjectCommand({ Bucket, Key: key }))
      return Buffer.from(await out.Body!.transformToByteArray())
    },
    async getToFile(key, path) {
      const out = await client.send(new GetObjectCommand({ Bucket, Key: key }))
      await pipeline(out.Body as Readable, createWriteStream(path, { flags: 'wx', mode: 0o600 }))
    },
    async exists(key) {
      try {
        await client.send(new HeadObjectCommand({ Bucket, Key: key }))
        return true
      } catch (err) {
        if ((err as { name?: string }).name === 'NotFound' || (err as { $metadata?: { httpStatusCode?: number } }).$metadata?.httpStatusCode === 404) return false
        throw err
      }
    },
    async remove(key) {
      try {
        await client.send(new DeleteObjectCommand({ Bucket, Key: key }))
      } catch (err) {
        // A server error on a delete whose object is gone anyway is a removal done. s3rver (the local stand-in) deletes
        // the object, then removes the folders it emptied, and answers 500 when a delete beside it removed one first
        // (removals side by side, as a purge or a restore does them); every retry fails the same way.
        if (((err as { $metadata?: { httpStatusCode?: number } }).$metadata?.httpStatusCode ?? 0) >= 500 && !(await this.exists(key))) return
        throw err
      }
    },
    async list(prefix) {
      return (await this.listDetailed(prefix)).map((o) => o.key)
    },
    async listDetailed(prefix) {
      const objects: { key: string; size: number; lastModified: Date }[] = []
      // ListObjects (v1) pages by marker = the last key seen. v2's continuation tokens would do as well on S3, but
      // s3rver (the local stand-in) builds them with a cipher OpenSSL 3 no longer offers, so page 2 fails there.
      let marker: string | undefined
      for (;;) {
        const page = await client.send(new ListObjectsCommand({ Bucket, Prefix: prefix, Marker: marker }))
        const contents = page.Contents ?? []
        for (const item of contents) if (item.Key) objects.push({ key: item.Key, size: item.Size ?? 0, lastModified: item.LastModified ?? new Date(0) })
        if (!page.IsTruncated || contents.length === 0) break
        marker = page.NextMarker ?? contents[contents.length - 1].Key
      }
      return objects
    },
    async ensureBucket() {
      try {
        await client.send(new HeadBucketCommand({ Bucket }))
      } catch {
        await client.send(new CreateBucketCommand({ Bucket }))
      }
    },
    async ping() {
      await client.send(new HeadBucketCommand({ Bucket }))
    },
    close() {
      client.destroy()
    },
  }
}
