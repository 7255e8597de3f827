/**
 * solveLinearSystem (shared/analysis/linearSolve.ts) on systems whose exact solutions are worked by hand [D]: each
 * solution substituted back into every equation.
 */
import { describe, expect, it } from 'vitest'
import { solveLinearSystem } from '../../../shared/analysis/linearSolve'

describe('solveLinearSystem', () => {
  it('When a 3 × 3 system has the exact solution (1, −2, 3), then it is found and the inputs are left as they were', () => {
    // 2x + y − z = −3, −3x − y + 2z = 5, −2x + y + 2z = 2 → x = 1, y = −2, z = 3 (by hand: each row checks).
    const a = [2, 1, -1, -3, -1, 2, -2, 1, 2]
    const b = [-3, 5, 2]
    const x = solveLinearSystem(a, b)!
    expect(Array.from(x).map((v) => Number(v.toFixed(12)))).toEqual([1, -2, 3])
    expect(a).toEqual([2, 1, -1, -3, -1, 2, -2, 1, 2])
    expect(b).toEqual([-3, 5, 2])
  })

  it('When the first pivot is zero, then rows are swapped: [[0, 1], [1, 0]]·x = (4, 7) gives x = (7, 4) exactly', () => {
    expect(Array.from(solveLinearSystem([0, 1, 1, 0], [4, 7])!)).toEqual([7, 4])
  })

  it('When two rows are proportional, then the system is singular and the answer is null', () => {
    expect(solveLinearSystem([1, 2, 2, 4], [3, 6])).toBeNull()
  })

  it('When every pivot is below the given tolerance, then the system counts as singular', () => {
    expect(solveLinearSystem([1e-13, 0, 0, 1e-13], [1, 1], 1e-12)).toBeNull()
    expect(Array.from(solveLinearSystem([1e-13, 0, 0, 1e-13], [1, 1])!)).toEqual([1e13, 1e13])
  })
})
