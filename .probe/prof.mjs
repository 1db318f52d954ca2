import fs from 'node:fs'
const f = process.argv[2]
const p = JSON.parse(fs.readFileSync(f))
const byId = new Map(p.nodes.map(n => [n.id, n]))
const self = new Map()
const dt = new Map()
for (let i = 0; i < p.samples.length; i++) dt.set(p.samples[i], (dt.get(p.samples[i]) || 0) + (p.timeDeltas[i] || 0))
const parent = new Map()
for (const n of p.nodes) for (const c of n.children || []) parent.set(c, n.id)
const total = [...dt.values()].reduce((a, b) => a + b, 0)
const incl = new Map(), selfBy = new Map(), fileIncl = new Map()
const key = n => `${n.callFrame.functionName || '(anon)'} ${n.callFrame.url.replace(/.*node_modules\//, 'nm/').replace(/.*\/work\/main\//, '')}:${n.callFrame.lineNumber}`
for (const [id, t] of dt) {
  let n = byId.get(id)
  selfBy.set(key(n), (selfBy.get(key(n)) || 0) + t)
  const seen = new Set(), seenF = new Set()
  let cur = id
  while (cur !== undefined) {
    const nn = byId.get(cur); const k = key(nn)
    if (!seen.has(k)) { seen.add(k); incl.set(k, (incl.get(k) || 0) + t) }
    const file = nn.callFrame.url.replace(/.*node_modules\/((@[^/]+\/)?[^/]+).*/, 'nm:$1').replace(/.*\/work\/main\//, '')
    if (!seenF.has(file)) { seenF.add(file); fileIncl.set(file, (fileIncl.get(file) || 0) + t) }
    cur = parent.get(cur)
  }
}
const top = (m, n) => [...m].sort((a, b) => b[1] - a[1]).slice(0, n).map(([k, v]) => `${(100 * v / total).toFixed(1).padStart(5)}% ${k}`).join('\n')
console.log('total ms', total / 1000)
console.log('--- self'); console.log(top(selfBy, 35))
console.log('--- inclusive'); console.log(top(incl, 70))
console.log('--- file inclusive'); console.log(top(fileIncl, 40))
