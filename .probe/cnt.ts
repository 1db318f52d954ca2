import fs from 'node:fs'
import { countRows } from '../server/services/run-record'
const def = JSON.parse(fs.readFileSync('.probe/def.json', 'utf8'))
const rd = JSON.parse(fs.readFileSync('.probe/rd.json', 'utf8'))
for (let k = 0; k < 3; k++) {
  const t = performance.now()
  for (let i = 0; i < 5000; i++) countRows(def, rd, [])
  console.log('countRows µs', ((performance.now() - t) / 5000 * 1000).toFixed(1), rd.length)
}
