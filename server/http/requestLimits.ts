/**
 * Refuses requests whose shape alone would cost the server more than any real client needs, before a route sees them:
 * URLs longer than MAX_URL_LENGTH (414 uri-too-long), more than MAX_QUERY_PARAMETERS query parameters (400
 * too-many-query-parameters), path segments that are not valid percent-encoding (400 malformed-url, instead of the
 * router's URIError reaching the error handler as a 500), and JSON bodies nested deeper than MAX_JSON_DEPTH (400
 * json-too-deep, found by a linear scan of the raw bytes before JSON.parse runs: a 2 MB body of brackets takes V8
 * about a second to parse, and JSON.stringify of a 10,000-level value throws RangeError when it is stored or echoed).
 * The query parser is node:querystring (Express 5's 'simple') with its key count capped: flat keys, repeated keys
 * become arrays, no nested objects.
 * Node's HTTP parser answers 431 by itself, before Express runs, when the request line and headers exceed its
 * --max-http-header-size (16 KB by default), so URLs between MAX_URL_LENGTH and that size get the 414 from here.
 */
import express, { type Express, type NextFunction, type Request, type Response } from 'express'
import { parse as parseQueryString } from 'node:querystring'
import { AppError } from '../errors'

/** Longest URL (path and query) accepted; far above any link the client builds. */
export const MAX_URL_LENGTH = 8 * 1024
/** Most query parameters accepted; no route reads more than about a dozen. */
export const MAX_QUERY_PARAMETERS = 100
/** Deepest JSON nesting accepted in a request body; recipes and measurements nest a few levels. */
export const MAX_JSON_DEPTH = 64
/** Largest JSON body, as before (app.ts: express.json({ limit: '2mb' })). */
export const JSON_BODY_LIMIT = '2mb'

/** Number of `&`-separated parameters in a raw query string (empty pieces, as in `a=1&&b=2`, do not count). */
function countQueryParameters(query: string): number {
  let count = 0
  for (const piece of query.split('&')) if (piece !== '') count++
  return count
}

function hasMalformedPathSegment(path: string): boolean {
  if (!path.includes('%')) return false
  for (const segment of path.split('/')) {
    if (!segment.includes('%')) continue
    try {
      decodeURIComponent(segment)
    } catch {
      return true
    }
  }
  return false
}

/** 414 for long URLs, 400 for too many query parameters or a path that is not valid percent-encoding. */
export function refuseOversizedUrls(req: Request, _res: Response, next: NextFunction): void {
  const url = req.originalUrl
  if (url.length > MAX_URL_LENGTH) {
    return next(
      new AppError(414, 'uri-too-long', `The URL is ${url.length.toLocaleString('en')} characters long; the limit is ${MAX_URL_LENGTH.toLocaleString('en')}.`),
    )
  }
  const queryStart = url.indexOf('?')
  if (queryStart !== -1 && countQueryParameters(url.slice(queryStart + 1)) > MAX_QUERY_PARAMETERS) {
    return next(new AppError(400, 'too-many-query-parameters', `The URL has more than ${MAX_QUERY_PARAMETERS} query parameters.`))
  }
  if (hasMalformedPathSegment(queryStart === -1 ? url : url.slice(0, queryStart))) {
    return next(new AppError(400, 'malformed-url', 'The URL path contains a % that does not start a valid percent-encoded character.'))
  }
  next()
}

/**
 * Deepest nesting of arrays and objects in JSON text, stopping as soon as it passes `limit`. Brackets inside strings
 * do not count. Works on UTF-8 bytes (bytes of multi-byte characters never equal an ASCII bracket or quote) or on
 * UTF-16 code units of a decoded string.
 */
export function jsonNestingDepth(text: ArrayLike<number>, limit: number): number {
  let depth = 0
  let deepest = 0
  let inString = false
  for (let i = 0; i < text.length; i++) {
    const c = text[i]
    if (inString) {
      if (c === 0x5c) i++ // backslash: skip the escaped character
      else if (c === 0x22) inString = false
    } else if (c === 0x22) {
      inString = true
    } else if (c === 0x5b || c === 0x7b) {
      depth++
      if (depth > deepest) {
        deepest = depth
        if (deepest > limit) return deepest
      }
    } else if (c === 0x5d || c === 0x7d) {
      depth--
    }
  }
  return deepest
}

/** UTF-16 code units of the body when its charset is not UTF-8 (body-parser accepts any utf-* charset). */
function codeUnits(body: Buffer, encoding: string): ArrayLike<number> {
  if (/^utf-?8$/i.test(encoding)) return body
  let text: string
  try {
    text = new TextDecoder(encoding).decode(body)
  } catch {
    // A charset TextDecoder lacks (UTF-32): scan the bytes; its brackets and quotes are still single ASCII bytes.
    return body
  }
  const units = new Uint16Array(text.length)
  for (let i = 0; i < text.length; i++) units[i] = text.charCodeAt(i)
  return units
}

/** body-parser `verify` hook: runs on the raw body before JSON.parse. */
function refuseDeepJson(_req: Request, _res: Response, body: Buffer, encoding: string): void {
  if (jsonNestingDepth(codeUnits(body, encoding), MAX_JSON_DEPTH) > MAX_JSON_DEPTH) {
    throw new AppError(400, 'json-too-deep', `The JSON body is nested more than ${MAX_JSON_DEPTH} levels deep.`)
  }
}

function boundedQueryParser(query: string): Record<string, unknown> {
  return parseQueryString(query, '&', '=', { maxKeys: MAX_QUERY_PARAMETERS })
}

/**
 * Register the limits on `app`: call once, before the body parsers and routes. Installs the bounded query parser, the
 * URL checks for every path, and the JSON body parser for /api with the depth check (an express.json registered after
 * it finds the body already read and leaves it alone).
 */
export function installRequestLimits(app: Express): void {
  app.set('query parser', boundedQueryParser)
  app.use(refuseOversizedUrls)
  app.use('/api', express.json({ limit: JSON_BODY_LIMIT, verify: refuseDeepJson }))
}
