// Regenerates refrigerant-saturation.ts from the CSV beside it: `npx tsx shared/data/generate-saturation-module.ts`.
// Run by hand only; the product imports the generated module, never this script.
import { readFileSync, writeFileSync } from 'node:fs'

const here = new URL('.', import.meta.url)
const csv = readFileSync(new URL('refrigerant-saturation.csv', here), 'utf8').trim().split(/\r?\n/)
const header = csv[0].split(',')
const expected = 'temperature_F,temperature_C,R134a_kPa_abs,R1233zdE_kPa_abs,R513A_bubble_kPa_abs,R513A_dew_kPa_abs'
if (header.join(',') !== expected) throw new Error(`Unexpected CSV header: ${header.join(',')}`)
const rows = csv.slice(1).map((line) => line.split(',').map(Number))
const column = (i: number) => `[${rows.map((r) => r[i]).join(', ')}]`

const out = `// Generated from refrigerant-saturation.csv by generate-saturation-module.ts; do not edit by hand.
// Source and attribution: README.md in this folder.

/** Temperatures of the table rows, °F (whole degrees). */
export const SATURATION_TEMPERATURE_F: readonly number[] = ${column(0)}

/** Saturation pressure, kPa absolute, at each row of SATURATION_TEMPERATURE_F. */
export const SATURATION_PRESSURE_KPA_ABS = {
  'R-134a': ${column(2)},
  'R-1233zd(E)': ${column(3)},
  'R-513A bubble': ${column(4)},
  'R-513A dew': ${column(5)},
} as const satisfies Record<string, readonly number[]>
`
writeFileSync(new URL('refrigerant-saturation.ts', here), out)
