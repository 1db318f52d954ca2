import fs from 'node:fs'
import { countRun } from './counting2'
import { dispositionOf } from '../shared/record/disposition'
const def = JSON.parse(fs.readFileSync('.probe/def.json', 'utf8'))
const rd = JSON.parse(fs.readFileSync('.probe/rd.json', 'utf8'))
const mapped = rd.map((r: any) => ({ fieldId: r.fieldId, verdict: r.verdict, hasValue: r.canonicalValue != null, disposition: dispositionOf(r) }))
for (let k = 0; k < 3; k++) {
  let t = performance.now()
  for (let i = 0; i < 5000; i++) rd.map((r: any) => ({ fieldId: r.fieldId, verdict: r.verdict, hasValue: r.canonicalValue != null, disposition: dispositionOf(r) }))
  console.log('map µs', ((performance.now() - t) / 5000 * 1000).toFixed(1))
  t = performance.now()
  for (let i = 0; i < 5000; i++) countRun(def, mapped, [])
  console.log('countRun premapped µs', ((performance.now() - t) / 5000 * 1000).toFixed(1))
}
