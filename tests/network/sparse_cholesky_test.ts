import assert from "node:assert/strict";
import { assertClose } from "../assert_close.ts";
import {
  analyse,
  minimumDegreeOrdering,
  type SymmetricPattern,
} from "../../src/network/sparse_cholesky.ts";

/**
 * Seeded uniform [0, 1) numbers: the 32-bit linear congruential generator
 * x ← 1664525·x + 1013904223 (mod 2³²) of Press et al., *Numerical Recipes*, 2nd ed., §7.1.
 */
function lcg(seed: number): () => number {
  let x = seed >>> 0;
  return () => {
    x = (Math.imul(1664525, x) + 1013904223) >>> 0;
    return x / 4294967296;
  };
}

interface Sparse {
  pattern: SymmetricPattern;
  diagonal: Float64Array;
  offDiagonal: Float64Array;
}

function dense(a: Sparse): number[][] {
  const n = a.pattern.size;
  const m = Array.from({ length: n }, () => new Array<number>(n).fill(0));
  for (let i = 0; i < n; i++) m[i][i] = a.diagonal[i];
  for (let k = 0; k < a.pattern.rows.length; k++) {
    const i = a.pattern.rows[k], j = a.pattern.cols[k];
    m[i][j] += a.offDiagonal[k];
    m[j][i] += a.offDiagonal[k];
  }
  return m;
}

/** Dense Cholesky A = G·Gᵀ and solve (Golub & Van Loan, *Matrix Computations*, 3rd ed., alg. 4.2.1). */
function denseCholeskySolve(a: number[][], b: ArrayLike<number>): { x: number[]; logDet: number } {
  const n = a.length;
  const g = a.map((row) => row.slice());
  let logDet = 0;
  for (let j = 0; j < n; j++) {
    for (let k = 0; k < j; k++) g[j][j] -= g[j][k] * g[j][k];
    g[j][j] = Math.sqrt(g[j][j]);
    logDet += 2 * Math.log(g[j][j]);
    for (let i = j + 1; i < n; i++) {
      for (let k = 0; k < j; k++) g[i][j] -= g[i][k] * g[j][k];
      g[i][j] /= g[j][j];
    }
  }
  const y = Array.from(b);
  for (let i = 0; i < n; i++) {
    for (let k = 0; k < i; k++) y[i] -= g[i][k] * y[k];
    y[i] /= g[i][i];
  }
  for (let i = n - 1; i >= 0; i--) {
    for (let k = i + 1; k < n; k++) y[i] -= g[k][i] * y[k];
    y[i] /= g[i][i];
  }
  return { x: y, logDet };
}

/**
 * Random SPD matrix: random off-diagonal pattern and values in [−1, 1], diagonal
 * Σ|a_ij| + 0.1 + u, so strictly diagonally dominant with a positive diagonal, hence
 * SPD (Gershgorin; Golub & Van Loan 3rd ed. §7.2.1).
 */
function randomSpd(n: number, couplings: number, rand: () => number): Sparse {
  const rows: number[] = [], cols: number[] = [], values: number[] = [];
  for (let k = 0; k < couplings; k++) {
    const i = Math.floor(rand() * n), j = Math.floor(rand() * n);
    if (i === j) continue;
    rows.push(i);
    cols.push(j);
    values.push(2 * rand() - 1);
  }
  const diagonal = new Float64Array(n);
  for (let k = 0; k < rows.length; k++) {
    diagonal[rows[k]] += Math.abs(values[k]);
    diagonal[cols[k]] += Math.abs(values[k]);
  }
  for (let i = 0; i < n; i++) diagonal[i] += 0.1 + rand();
  return { pattern: { size: n, rows, cols }, diagonal, offDiagonal: Float64Array.from(values) };
}

function randomTree(n: number, rand: () => number): Sparse {
  const rows: number[] = [], cols: number[] = [], values: number[] = [];
  for (let i = 1; i < n; i++) {
    rows.push(i);
    cols.push(Math.floor(rand() * i));
    values.push(-(0.1 + rand()));
  }
  const diagonal = new Float64Array(n);
  for (let k = 0; k < rows.length; k++) {
    diagonal[rows[k]] -= values[k];
    diagonal[cols[k]] -= values[k];
  }
  diagonal[0] += 1; // a grounded Laplacian: SPD
  return { pattern: { size: n, rows, cols }, diagonal, offDiagonal: Float64Array.from(values) };
}

function checkAgainstDense(a: Sparse, rand: () => number, what: string) {
  const symbolic = analyse(a.pattern);
  const result = symbolic.factor(a);
  assert.ok(result.ok, `${what}: factor failed`);
  const b = Float64Array.from({ length: a.pattern.size }, () => 2 * rand() - 1);
  const x = result.factor.solve(b);
  const reference = denseCholeskySolve(dense(a), b);
  let worst = 0;
  for (let i = 0; i < x.length; i++) worst = Math.max(worst, Math.abs(x[i] - reference.x[i]));
  const scale = Math.max(...reference.x.map(Math.abs));
  // Both are backward stable for SPD systems; agreement to 1e-12 of the solution's size.
  assertClose(worst, 0, { abs: 1e-12 * scale, what: `${what}: max |x − x_dense|` });
  // det A = Π D_k for LDLᵀ = Π G_kk² for the dense Cholesky (same matrix, any ordering).
  const logDet = result.factor.pivots.reduce((s, d) => s + Math.log(d), 0);
  assertClose(logDet, reference.logDet, { rel: 1e-12, abs: 1e-12, what: `${what}: log det` });
}

Deno.test("sparse LDLᵀ matches a dense Cholesky on random SPD matrices", () => {
  const rand = lcg(20240611);
  for (let trial = 0; trial < 40; trial++) {
    const n = 1 + Math.floor(rand() * 40);
    const a = randomSpd(n, Math.floor(rand() * 3 * n), rand);
    checkAgainstDense(a, rand, `random SPD #${trial} (n = ${n})`);
  }
});

Deno.test("sparse LDLᵀ: tridiagonal K_n = tridiag(−1, 2, −1) against its closed forms", () => {
  // Strang, *Computational Science and Engineering* (2007) §1.2 (from memory): det K_n = n + 1,
  // and K_n·u = 1 has u_i = i(n + 1 − i)/2 (the discrete −u'' = 1 with zero ends).
  for (const n of [1, 2, 7, 50]) {
    const rows = Array.from({ length: n - 1 }, (_, i) => i);
    const cols = rows.map((i) => i + 1);
    const symbolic = analyse({ size: n, rows, cols });
    assert.equal(symbolic.fillIn, 0, "a tridiagonal matrix (a path graph) has no fill");
    const r = symbolic.factor({
      diagonal: new Float64Array(n).fill(2),
      offDiagonal: new Float64Array(n - 1).fill(-1),
    });
    assert.ok(r.ok);
    const u = r.factor.solve(new Float64Array(n).fill(1));
    for (let i = 1; i <= n; i++) {
      assertClose(u[i - 1], (i * (n + 1 - i)) / 2, { rel: 1e-12, what: `K_${n} u_${i}` });
    }
    const det = r.factor.pivots.reduce((p, d) => p * d, 1);
    assertClose(det, n + 1, { rel: 1e-12, what: `det K_${n}` });
  }
});

Deno.test("sparse LDLᵀ: a star has zero fill under minimum degree, a full clique centre-first", () => {
  // Eliminating the centre of a star first joins all k leaves pairwise: k(k−1)/2 fill
  // entries; leaves first, none (George & Liu, *Computer Solution of Large Sparse
  // Positive Definite Systems*, 1981, ch. 5 — the classic arrow-matrix example, from memory).
  const k = 12;
  const rows = Array.from({ length: k }, (_, i) => i + 1);
  const cols = new Array<number>(k).fill(0);
  const pattern = { size: k + 1, rows, cols };
  assert.equal(analyse(pattern).fillIn, 0);
  assert.equal(analyse(pattern, { ordering: "natural" }).fillIn, (k * (k - 1)) / 2);
  // With one leaf left, centre and leaf both have degree 1: the centre goes last or next-to-last.
  assert.ok(minimumDegreeOrdering(pattern).indexOf(0) >= k - 1, "the centre is eliminated late");
  const rand = lcg(7);
  const offDiagonal = Float64Array.from({ length: k }, () => -rand());
  const diagonal = new Float64Array(k + 1).fill(1);
  for (let i = 0; i < k; i++) {
    diagonal[0] -= offDiagonal[i];
    diagonal[i + 1] -= offDiagonal[i];
  }
  checkAgainstDense({ pattern, diagonal, offDiagonal }, rand, "star");
});

Deno.test("sparse LDLᵀ: random trees factor with zero fill and match the dense solve", () => {
  const rand = lcg(99);
  for (let trial = 0; trial < 20; trial++) {
    const n = 2 + Math.floor(rand() * 200);
    const tree = randomTree(n, rand);
    assert.equal(analyse(tree.pattern).fillIn, 0, `tree #${trial} (n = ${n}) has fill`);
    assert.equal(analyse(tree.pattern).factorNonZeros, n - 1);
    checkAgainstDense(tree, rand, `tree #${trial}`);
  }
});

Deno.test("sparse LDLᵀ: repeated entries are summed and one analysis serves many factorisations", () => {
  // [[3, −2], [−2, 3]] given as two −1 entries; A·[1, 1] = [1, 1] (arithmetic).
  const symbolic = analyse({ size: 2, rows: [0, 1], cols: [1, 0] });
  const first = symbolic.factor({ diagonal: [3, 3], offDiagonal: [-1, -1] });
  assert.ok(first.ok);
  const x = first.factor.solve([1, 1]);
  assertClose(x[0], 1, { rel: 1e-14 });
  assertClose(x[1], 1, { rel: 1e-14 });
  // Second values on the same analysis: [[4, 1], [1, 2]]·[1, −1] = [3, −1] (arithmetic).
  const second = symbolic.factor({ diagonal: [4, 2], offDiagonal: [0.5, 0.5] });
  assert.ok(second.ok);
  const y = second.factor.solve([3, -1]);
  assertClose(y[0], 1, { rel: 1e-14 });
  assertClose(y[1], -1, { rel: 1e-14 });
});

Deno.test("sparse LDLᵀ: an indefinite matrix is reported, a malformed pattern throws", () => {
  // [[1, 2], [2, 1]] has eigenvalues 3 and −1 (arithmetic): not positive definite.
  const r = analyse({ size: 2, rows: [0], cols: [1] }).factor({
    diagonal: [1, 1],
    offDiagonal: [2],
  });
  assert.equal(r.ok, false);
  if (!r.ok) assert.equal(r.code, "not_positive_definite");
  assert.throws(() => analyse({ size: 2, rows: [0], cols: [2] }), RangeError);
  assert.throws(() => analyse({ size: 2, rows: [1], cols: [1] }), RangeError);
});
