import {
  addDependencies,
  compileDependencies,
  create,
  divideDependencies,
  multiplyDependencies,
  parseDependencies,
  powDependencies,
  subtractDependencies,
  unaryMinusDependencies,
  unaryPlusDependencies,
} from 'mathjs/number'

// The expression parser of computed fields: mathjs's number-only build with parse, compile and the arithmetic that
// expression.ts allows (ALLOWED_OPERATORS), nothing else. The client computes live verdicts with it, so the full
// mathjs (units, matrices, BigNumber, Complex, Fraction: about 650 kB) stays out of the browser; the server judges
// with the same instance. Arrays stay plain arrays (phase lists for unbalancePct), and `predictable` keeps a root of a
// negative number NaN (refused as not finite) rather than complex.
export const math = create(
  {
    parseDependencies,
    compileDependencies,
    addDependencies,
    subtractDependencies,
    multiplyDependencies,
    divideDependencies,
    powDependencies,
    unaryMinusDependencies,
    unaryPlusDependencies,
  },
  { matrix: 'Array', predictable: true },
)
