/**
 * The object store (S3-compatible; s3rver locally). The app reaches it only through @aws-sdk/client-s3.
 * Checksum options are 'WHEN_REQUIRED' because the SDK's default aws-chunked uploads are stored with their chunk
 * framing by s3rver (STACK.md gotcha 8); real S3 accepts both.
 */
import { CreateBucketCommand, DeleteObjectCommand, GetObjectCommand, HeadBucketCommand, HeadObjectCommand, ListObjectsV2Command, S3Client } from '@aws-sdk/client-s3'
import { Upload } from '@aws-sdk/lib-storage'
import type { Readable } from 'node:stream'
import type { AppConfig } from '../config'

process.env.AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED ??= 'true'

export interface ObjectStore {
  bucket: string
  put(key: string, body: Buffer | Readable, contentType: string): Promise<void>
  get(key: string): Promise<Buffer>
  exists(key: string): Promise<boolean>
  remove(key: string): Promise<void>
  list(prefix?: string): Promise<string[]>
  /** Every object with its size and last-modified time. */
  listDetailed(prefix?: string): Promise<{ key: string; size: number; lastModified: Date }[]>
  ensureBucket(): Promise<void>
  ping(): Promise<void>
  close(): void
}

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
    async get(key) {
      const out = await client.send(new GetObjectCommand({ Bucket, Key: key }))
      return Buffer.from(await out.Body!.transformToByteArray())
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
      await client.send(new DeleteObjectCommand({ Bucket, Key: key }))
    },
    async list(prefix) {
      return (await this.listDetailed(prefix)).map((o) => o.key)
    },
    async listDetailed(prefix) {
      const objects: { key: string; size: number; lastModified: Date }[] = []
      let token: string | undefined
      do {
        const page = await client.send(new ListObjectsV2Command({ Bucket, Prefix: prefix, ContinuationToken: token }))
        for (const item of page.Contents ?? []) if (item.Key) objects.push({ key: item.Key, size: item.Size ?? 0, lastModified: item.LastModified ?? new Date(0) })
        token = page.IsTruncated ? page.NextContinuationToken : undefined
      } while (token)
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
