import compression from 'compression'
import type { RequestHandler } from 'express'
import { constants } from 'node:zlib'

/**
 * Compresses the API's JSON answers (brotli when the browser offers it, else gzip) with the `compression` middleware.
 * Only JSON: downloads (PDF, ZIP, CSV, photos) are already compressed or stream with a Content-Length that the
 * client's progress bar reads. Small answers (a saved reading) are sent as they are; a run page shrinks several-fold.
 */
export function compressJson(): RequestHandler {
  return compression({
    threshold: 1024,
    filter: (_req, res) => /^application\/json\b/i.test(String(res.getHeader('Content-Type') ?? '')),
    // A middle quality: the answer is compressed on every request, not once at build time.
    brotli: { params: { [constants.BROTLI_PARAM_QUALITY]: 5 } },
  })
}
