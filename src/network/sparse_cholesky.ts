/**
 * Sparse LDLᵀ factorisation of symmetric positive definite matrices, split into a
 * symbolic phase (fill-reducing ordering, elimination tree, column counts) done once
 * per sparsity pattern and a numeric phase (`factor`, then `solve`) repeated for
 * every new set of values with that pattern.
 *
 * Ordering: minimum degree on the explicit elimination graph (Tinney & Walker (1967)
 * Proc. IEEE 55(11):1801, "scheme 2"; George & Liu (1989) SIAM Review 31(1):1).
 * A tree has a leaf of degree 1 at every stage, so it factors with zero fill.
 * Factorisation: the up-looking row-by-row LDLᵀ with the elimination tree described
 * by Davis (2005) "Algorithm 849: a concise sparse Cholesky factorization package",
 * ACM TOMS 31(4):587, and Davis, *Direct Methods for Sparse Linear Systems*
 * (SIAM 2006), ch. 4.
 *
 * @module
 */

/**
 * Off-diagonal sparsity pattern of a symmetric `size`×`size` matrix: entry k couples
 * rows `rows[k]` and `cols[k]` (i ≠ j). Each coupled pair appears at least once, in
 * either orientation; repeated pairs are allowed and their values are summed. The
 * diagonal is always present and is not listed.
 */
export interface SymmetricPattern {
  /** Matrix order n (≥ 0). */
  size: number;
  /** Row index of each off-diagonal entry, 0 ≤ i < n. */
  rows: ArrayLike<number>;
  /** Column index of each off-diagonal entry, 0 ≤ j < n, j ≠ i. */
  cols: ArrayLike<number>;
}

/** Values of a matrix with a given {@link SymmetricPattern}. */
export interface SymmetricValues {
  /** The n diagonal entries, in original index order. */
  diagonal: ArrayLike<number>;
  /** One value per pattern entry, in pattern order (the entry stands for both A_ij and A_ji). */
  offDiagonal: ArrayLike<number>;
}

/** Options of {@link analyse}. */
export interface AnalyseOptions {
  /** Elimination order: `"minimum_degree"` (default) or `"natural"` (0, 1, …, n−1; for tests). */
  ordering?: "minimum_degree" | "natural";
}

/** Numeric LDLᵀ factor of P·A·Pᵀ, able to solve A·x = b. */
export interface NumericCholesky {
  /** Pivots D (in elimination order), all > 0 for an SPD matrix. */
  readonly pivots: Float64Array;
  /** Solve A·x = rhs; writes into `out` when given (it may be `rhs` itself) and returns x. */
  solve(rhs: ArrayLike<number>, out?: Float64Array): Float64Array;
}

/** Outcome of {@link SymbolicCholesky.factor}: the factor, or the column where a pivot was ≤ 0. */
export type CholeskyResult =
  | { ok: true; factor: NumericCholesky }
  | { ok: false; code: "not_positive_definite"; column: number; message: string };

/** Result of the symbolic phase; `factor` may be called any number of times. */
export interface SymbolicCholesky {
  /** Matrix order n. */
  readonly size: number;
  /** Elimination order: `permutation[k]` is the original index eliminated k-th. */
  readonly permutation: Int32Array;
  /** Strictly-lower non-zeros of L. */
  readonly factorNonZeros: number;
  /** Non-zeros of L that are not in A's lower triangle (distinct pairs): the fill-in. */
  readonly fillIn: number;
  /**
   * Numeric factorisation for the given values. The returned factor shares storage with
   * this analysis: it stays valid until the next call of `factor`.
   */
  factor(values: SymmetricValues): CholeskyResult;
}

/** Minimal binary heap of (key, node) pairs ordered by key, then node; stale pairs are skipped by the caller. */
class PairHeap {
  #keys: number[] = [];
  #nodes: number[] = [];

  get length(): number {
    return this.#keys.length;
  }

  #less(a: number, b: number): boolean {
    const ka = this.#keys[a], kb = this.#keys[b];
    return ka < kb || (ka === kb && this.#nodes[a] < this.#nodes[b]);
  }

  #swap(a: number, b: number): void {
    const k = this.#keys[a], n = this.#nodes[a];
    this.#keys[a] = this.#keys[b];
    this.#nodes[a] = this.#nodes[b];
    this.#keys[b] = k;
    this.#nodes[b] = n;
  }

  push(key: number, node: number): void {
    this.#keys.push(key);
    this.#nodes.push(node);
    let i = this.#keys.length - 1;
    while (i > 0) {
      const parent = (i - 1) >> 1;
      if (!this.#less(i, parent)) break;
      this.#swap(i, parent);
      i = parent;
    }
  }

  /** Remove the smallest pair; returns [key, node]. */
  pop(): [number, number] {
    const top: [number, number] = [this.#keys[0], this.#nodes[0]];
    const last = this.#keys.length - 1;
    this.#swap(0, last);
    this.#keys.pop();
    this.#nodes.pop();
    let i = 0;
    const n = this.#keys.length;
    for (;;) {
      const l = 2 * i + 1, r = l + 1;
      let m = i;
      if (l < n && this.#less(l, m)) m = l;
      if (r < n && this.#less(r, m)) m = r;
      if (m === i) break;
      this.#swap(i, m);
      i = m;
    }
    return top;
  }
}

function checkPattern(pattern: SymmetricPattern): void {
  const { size, rows, cols } = pattern;
  if (!Number.isInteger(size) || size < 0) {
    throw new RangeError(`Cannot analyse sparsity: size must be an integer ≥ 0, got ${size}`);
  }
  if (rows.length !== cols.length) {
    throw new RangeError(
      `Cannot analyse sparsity: rows and cols differ in length (${rows.length} vs ${cols.length})`,
    );
  }
  for (let k = 0; k < rows.length; k++) {
    const i = rows[k], j = cols[k];
    if (!Number.isInteger(i) || !Number.isInteger(j) || i < 0 || j < 0 || i >= size || j >= size) {
      throw new RangeError(
        `Cannot analyse sparsity: entry ${k} = (${i}, ${j}) is outside a ${size}×${size} matrix`,
      );
    }
    if (i === j) {
      throw new RangeError(
        `Cannot analyse sparsity: entry ${k} = (${i}, ${j}) is on the diagonal; list off-diagonal entries only`,
      );
    }
  }
}

/**
 * Minimum degree elimination order of a symmetric pattern (ties broken by the lower
 * index, so the order is deterministic). Explicit elimination graph: eliminating v joins
 * all its remaining neighbours pairwise (Tinney & Walker 1967; George & Liu 1989).
 * Cost ~ Σ deg(v)² at elimination, i.e. linear for tree-like graphs.
 *
 * @returns `order[k]` = original index eliminated k-th.
 */
export function minimumDegreeOrdering(pattern: SymmetricPattern): Int32Array {
  checkPattern(pattern);
  const n = pattern.size;
  const adjacency: Set<number>[] = Array.from({ length: n }, () => new Set<number>());
  for (let k = 0; k < pattern.rows.length; k++) {
    const i = pattern.rows[k], j = pattern.cols[k];
    adjacency[i].add(j);
    adjacency[j].add(i);
  }
  const heap = new PairHeap();
  for (let v = 0; v < n; v++) heap.push(adjacency[v].size, v);
  const eliminated = new Uint8Array(n);
  const order = new Int32Array(n);
  let count = 0;
  while (count < n) {
    const [degree, v] = heap.pop();
    if (eliminated[v] || degree !== adjacency[v].size) continue;
    eliminated[v] = 1;
    order[count++] = v;
    const neighbours = [...adjacency[v]];
    for (const u of neighbours) {
      const set = adjacency[u];
      set.delete(v);
      for (const w of neighbours) if (w !== u) set.add(w);
      heap.push(set.size, u);
    }
    adjacency[v].clear();
  }
  return order;
}

/**
 * Symbolic LDLᵀ analysis of an SPD matrix's pattern: ordering, elimination tree and
 * the structure of L (Davis 2005, ACM TOMS 31(4):587). Throws `RangeError` for a
 * malformed pattern (index out of range, diagonal entry listed).
 *
 * @example
 * ```ts
 * // 3×3 tridiagonal [[2,-1,0],[-1,2,-1],[0,-1,2]]
 * const symbolic = analyse({ size: 3, rows: [0, 1], cols: [1, 2] });
 * const r = symbolic.factor({ diagonal: [2, 2, 2], offDiagonal: [-1, -1] });
 * if (r.ok) r.factor.solve([1, 0, 1]); // → [1, 1, 1]
 * ```
 */
export function analyse(pattern: SymmetricPattern, options: AnalyseOptions = {}): SymbolicCholesky {
  const ordering = options.ordering ?? "minimum_degree";
  if (ordering !== "minimum_degree" && ordering !== "natural") {
    throw new RangeError(`Cannot analyse sparsity: unknown ordering "${ordering}"`);
  }
  const permutation = ordering === "natural"
    ? Int32Array.from({ length: pattern.size }, (_, k) => k)
    : minimumDegreeOrdering(pattern);
  checkPattern(pattern);
  const n = pattern.size;
  const m = pattern.rows.length;
  const inverse = new Int32Array(n);
  for (let k = 0; k < n; k++) inverse[permutation[k]] = k;

  // Upper triangle of P·A·Pᵀ by columns: column c holds rows r < c, each with its pattern entry.
  const upperStart = new Int32Array(n + 1);
  for (let k = 0; k < m; k++) {
    upperStart[Math.max(inverse[pattern.rows[k]], inverse[pattern.cols[k]]) + 1]++;
  }
  for (let c = 0; c < n; c++) upperStart[c + 1] += upperStart[c];
  const upperRow = new Int32Array(m);
  const upperEntry = new Int32Array(m);
  const cursor = upperStart.slice(0, n);
  for (let k = 0; k < m; k++) {
    const a = inverse[pattern.rows[k]], b = inverse[pattern.cols[k]];
    const c = Math.max(a, b);
    const p = cursor[c]++;
    upperRow[p] = Math.min(a, b);
    upperEntry[p] = k;
  }

  // Elimination tree and column counts of L (Davis 2005, ldl_symbolic).
  const parent = new Int32Array(n).fill(-1);
  const flag = new Int32Array(n);
  const columnCount = new Int32Array(n);
  let distinctLower = 0;
  const seen = new Int32Array(n).fill(-1);
  for (let k = 0; k < n; k++) {
    flag[k] = k;
    for (let p = upperStart[k]; p < upperStart[k + 1]; p++) {
      let i = upperRow[p];
      if (seen[i] !== k) {
        seen[i] = k;
        distinctLower++;
      }
      for (; flag[i] !== k; i = parent[i]) {
        if (parent[i] === -1) parent[i] = k;
        columnCount[i]++;
        flag[i] = k;
      }
    }
  }
  const columnStart = new Int32Array(n + 1);
  for (let k = 0; k < n; k++) columnStart[k + 1] = columnStart[k] + columnCount[k];
  const factorNonZeros = columnStart[n];

  const lowerRow = new Int32Array(factorNonZeros);
  const lowerValue = new Float64Array(factorNonZeros);
  const pivots = new Float64Array(n);
  const filled = new Int32Array(n);
  const work = new Float64Array(n);
  const stack = new Int32Array(n);
  const solveWork = new Float64Array(n);

  const factor: NumericCholesky = {
    pivots,
    solve(rhs: ArrayLike<number>, out?: Float64Array): Float64Array {
      if (rhs.length !== n) {
        throw new RangeError(`Cannot solve: right-hand side has length ${rhs.length}, need ${n}`);
      }
      const x = solveWork;
      for (let k = 0; k < n; k++) x[k] = rhs[permutation[k]];
      for (let j = 0; j < n; j++) {
        const xj = x[j];
        for (let p = columnStart[j]; p < columnStart[j + 1]; p++) {
          x[lowerRow[p]] -= lowerValue[p] * xj;
        }
      }
      // D⁻¹ then Lᵀ back-substitution, in one pass: row j is divided just before it is used.
      for (let j = n - 1; j >= 0; j--) {
        let xj = x[j] / pivots[j];
        for (let p = columnStart[j]; p < columnStart[j + 1]; p++) {
          xj -= lowerValue[p] * x[lowerRow[p]];
        }
        x[j] = xj;
      }
      const result = out ?? new Float64Array(n);
      for (let k = 0; k < n; k++) result[permutation[k]] = x[k];
      return result;
    },
  };

  return {
    size: n,
    permutation,
    factorNonZeros,
    fillIn: factorNonZeros - distinctLower,
    factor(values: SymmetricValues): CholeskyResult {
      const { diagonal, offDiagonal } = values;
      if (diagonal.length !== n || offDiagonal.length !== m) {
        throw new RangeError(
          `Cannot factor: need ${n} diagonal and ${m} off-diagonal values, got ${diagonal.length} and ${offDiagonal.length}`,
        );
      }
      // Row k of L from a sparse triangular solve along the elimination tree (Davis 2005, ldl_numeric).
      for (let k = 0; k < n; k++) {
        work[k] = diagonal[permutation[k]];
        let top = n;
        flag[k] = k;
        filled[k] = 0;
        for (let p = upperStart[k]; p < upperStart[k + 1]; p++) {
          let i = upperRow[p];
          work[i] += offDiagonal[upperEntry[p]];
          let length = 0;
          for (; flag[i] !== k; i = parent[i]) {
            stack[length++] = i;
            flag[i] = k;
          }
          while (length > 0) stack[--top] = stack[--length];
        }
        let d = work[k];
        work[k] = 0;
        for (; top < n; top++) {
          const i = stack[top];
          const yi = work[i];
          work[i] = 0;
          const end = columnStart[i] + filled[i];
          for (let p = columnStart[i]; p < end; p++) work[lowerRow[p]] -= lowerValue[p] * yi;
          const lki = yi / pivots[i];
          d -= lki * yi;
          lowerRow[end] = k;
          lowerValue[end] = lki;
          filled[i]++;
        }
        if (!(d > 0) || !Number.isFinite(d)) {
          work.fill(0);
          return {
            ok: false,
            code: "not_positive_definite",
            column: permutation[k],
            message: `Matrix is not positive definite: pivot ${d} at row ${permutation[k]}`,
          };
        }
        pivots[k] = d;
      }
      return { ok: true, factor };
    },
  };
}
