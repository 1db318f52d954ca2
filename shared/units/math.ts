import { create, all } from 'mathjs'

// A private instance: the units added here never leak into another module's mathjs, and the
// expression parser used for computed fields sees exactly this configuration.
export const math = create(all, { number: 'number', matrix: 'Array', predictable: true })

// Ton of refrigeration: 12 000 Btu_IT/h = 3.516 853 kW (NIST SP 811 (2008) App. B.8). mathjs's BTU
// is the IT Btu, 1055.05585262 J.
math.createUnit('TR', '12000 BTU/h')
// Conventional water and mercury columns (NIST SP 811 (2008) App. B.8): mathjs has mmH2O and mmHg only.
math.createUnit('inHg', '3386.389 Pa')
math.createUnit('inH2O', '249.0889 Pa')
math.createUnit('ftH2O', '2989.067 Pa')
// Angular misalignment as laser alignment tools show it, millimetres per 100 mm (a ratio: 1 mm/100 mm = 10 mm/m).
// mathjs has mil (0.001 in), in/s, mm/s and cycle (2π rad) for speed in r/min already.
math.createUnit('mmPer100mm', '0.01 mm/mm')
