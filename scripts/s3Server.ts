/**
 * Local S3 stand-in: s3rver on 127.0.0.1, data under .data/s3, bucket (with its CORS rule) created at start.
 * The app never talks to s3rver directly, only through @aws-sdk/client-s3. Tests start the same server on a free
 * port through `startS3Server`.
 */
import S3rver from 's3rver'
import { readFileSync, mkdirSync } from 'node:fs'
import { fileURLToPath, pathToFileURL } from 'node:url'

const CORS_XML = readFileSync(fileURLToPath(new URL('../dev/cors.xml', import.meta.url)), 'utf8')

export async function startS3Server(options: { port: number; directory: string; bucket: string }) {
  mkdirSync(options.directory, { recursive: true })
  const server = new S3rver({
    port: options.port,
    address: '127.0.0.1',
    silent: true,
    directory: options.directory,
    configureBuckets: [{ name: options.bucket, configs: [CORS_XML] }],
  })
  const { port } = await server.run()
  return { port, endpoint: `http://127.0.0.1:${port}`, close: () => server.close() }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const port = Number(process.env.S3_PORT ?? 4569)
  const directory = process.env.S3_DATA_DIR ?? fileURLToPath(new URL('../.data/s3', import.meta.url))
  const bucket = process.env.S3_BUCKET ?? 'remanence-images'
  const s3 = await startS3Server({ port, directory, bucket })
  console.log(`[s3] s3rver on ${s3.endpoint}, bucket "${bucket}", data in ${directory}`)
  const stop = () => void s3.close().then(() => process.exit(0))
  process.on('SIGINT', stop)
  process.on('SIGTERM', stop)
}
