import sharp from 'sharp'
import { rng } from './readings'

/**
 * An invented handwritten-looking signature for a demo person: a few joined loops drawn from a number derived from the name, with a
 * flourish underneath, rendered by sharp from SVG to a PNG data URL as the signature pad would send it.
 */
export async function signatureDataUrl(name: string): Promise<string> {
  let n = 7
  for (const ch of name) n = (Math.imul(n, 31) + ch.charCodeAt(0)) >>> 0
  const r = rng(n)
  const letters = name.replace(/[^A-Za-z]/g, '').length
  const width = 460
  const height = 140
  let x = 24 + r.between(0, 10)
  const base = 86
  const parts = [`M ${x.toFixed(1)} ${(base - r.between(10, 30)).toFixed(1)}`]
  const strokes = Math.min(14, Math.max(7, letters))
  const step = (width - 90) / strokes
  for (let i = 0; i < strokes; i++) {
    const tall = r.next() < 0.3 || i === 0
    const top = base - (tall ? r.between(42, 60) : r.between(14, 28))
    const x1 = x + step * r.between(0.2, 0.5)
    const x2 = x + step * r.between(0.6, 1.1)
    x += step * r.between(0.8, 1.15)
    parts.push(`C ${x1.toFixed(1)} ${top.toFixed(1)}, ${x2.toFixed(1)} ${(base + r.between(2, 10)).toFixed(1)}, ${x.toFixed(1)} ${(base - r.between(0, 12)).toFixed(1)}`)
  }
  const flourish = `M ${(30 + r.between(0, 20)).toFixed(1)} ${(base + 22).toFixed(1)} Q ${(width / 2).toFixed(1)} ${(base + r.between(28, 40)).toFixed(1)}, ${(x + 10).toFixed(1)} ${(base + r.between(6, 16)).toFixed(1)}`
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}">
    <path d="${parts.join(' ')}" fill="none" stroke="#1d2a44" stroke-width="3.2" stroke-linecap="round" stroke-linejoin="round"/>
    <path d="${flourish}" fill="none" stroke="#1d2a44" stroke-width="2.4" stroke-linecap="round"/>
  </svg>`
  const png = await sharp(Buffer.from(svg)).png({ compressionLevel: 9 }).toBuffer()
  return `data:image/png;base64,${png.toString('base64')}`
}
