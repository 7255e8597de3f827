/**
 * A small dense linear system A·x = b, for the normal equations of the least-squares fits (a handful of unknowns),
 * where a linear-algebra library would cost more than it saves.
 *
 * Method: Gaussian elimination with partial pivoting, then back substitution (G. H. Golub & C. F. Van Loan,
 * *Matrix Computations*, 4th ed., Johns Hopkins 2013, §3.2–3.4 [from memory]). Rows are swapped whole; each
 * elimination step subtracts f·(pivot row) from the rows below it, columns left to right, so every caller gets the
 * same floating-point operations in the same order.
 * Checked against: systems with exact solutions worked by hand (tests/shared/analysis/linearSolve.test.ts).
 */

/**
 * @param a the n × n matrix, row-major (n = b.length); not changed.
 * @param b the right-hand side; not changed.
 * @param minPivot a pivot whose magnitude is not above this counts as singular (default 0: only an exact zero or NaN).
 * @returns x, or null when A is singular at that tolerance. x is not checked for finiteness (callers that need it do).
 */
export function solveLinearSystem(a: ArrayLike<number>, b: ArrayLike<number>, minPivot = 0): Float64Array | null {
  const n = b.length
  const m = Float64Array.from(a)
  const v = Float64Array.from(b)
  for (let c = 0; c < n; c++) {
    let pivot = c
    for (let r = c + 1; r < n; r++) if (Math.abs(m[r * n + c]) > Math.abs(m[pivot * n + c])) pivot = r
    if (!(Math.abs(m[pivot * n + c]) > minPivot)) return null
    if (pivot !== c) {
      for (let k = 0; k < n; k++) {
        const t = m[c * n + k]
        m[c * n + k] = m[pivot * n + k]
        m[pivot * n + k] = t
      }
      const t = v[c]
      v[c] = v[pivot]
      v[pivot] = t
    }
    for (let r = c + 1; r < n; r++) {
      const f = m[r * n + c] / m[c * n + c]
      for (let k = c; k < n; k++) m[r * n + k] -= f * m[c * n + k]
      v[r] -= f * v[c]
    }
  }
  const x = new Float64Array(n)
  for (let r = n - 1; r >= 0; r--) {
    let s = v[r]
    for (let k = r + 1; k < n; k++) s -= m[r * n + k] * x[k]
    x[r] = s / m[r * n + r]
  }
  return x
}
