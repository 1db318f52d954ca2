import { create } from 'qrcode'

/** A QR code of `text` as an inline SVG string: one path of dark modules, a 4-module quiet zone, no script. */
export function qrCodeSvg(text: string, options: { sizeMm?: number; title?: string } = {}): string {
  const { modules } = create(text, { errorCorrectionLevel: 'M' })
  const quiet = 4
  const n = modules.size + quiet * 2
  let d = ''
  for (let row = 0; row < modules.size; row++) {
    for (let col = 0; col < modules.size; col++) {
      if (modules.get(row, col)) d += `M${col + quiet} ${row + quiet}h1v1h-1z`
    }
  }
  const size = options.sizeMm ?? 32
  const title = (options.title ?? 'QR code').replace(/[<>&"']/g, (c) => `&#${c.charCodeAt(0)};`)
  return (
    `<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${n} ${n}" width="${size}mm" height="${size}mm" shape-rendering="crispEdges" role="img">` +
    `<title>${title}</title><rect width="${n}" height="${n}" fill="#FFFFFF"/><path d="${d}" fill="#000000"/></svg>`
  )
}
