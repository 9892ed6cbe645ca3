/**
 * Small dense linear algebra for the engine's side problems (reaction decompositions, turnover rates,
 * the correction's normal equations): Gaussian elimination with partial pivoting and least squares.
 *
 * Source: Golub & Van Loan, Matrix Computations, 4th ed. 2013, §3.4 and §5.3 [pub].
 * Cost: O(k³) for k unknowns; only used with k = number of reactions or of basis cycles.
 * Invariants: matrices are arrays of rows; rank-deficient columns get a zero coefficient (minimum-effort
 * particular solution), never NaN.
 */

/** Solves A x = b for square A; rank-deficient pivots (|pivot| ≤ tol·max) give x = 0 in that direction. */
export function solveDense(A: number[][], b: number[], tol = 1e-12): number[] {
	const k = b.length;
	const M = A.map((row, i) => [...row, b[i]]);
	let scale = 0;
	for (const row of A) for (const v of row) scale = Math.max(scale, Math.abs(v));
	const pivotCol: number[] = [];
	let r = 0;
	for (let c = 0; c < k && r < k; c++) {
		let best = r;
		for (let i = r + 1; i < k; i++) if (Math.abs(M[i][c]) > Math.abs(M[best][c])) best = i;
		if (Math.abs(M[best][c]) <= tol * scale) continue;
		[M[r], M[best]] = [M[best], M[r]];
		for (let i = 0; i < k; i++) {
			if (i === r || M[i][c] === 0) continue;
			const f = M[i][c] / M[r][c];
			for (let j = c; j <= k; j++) M[i][j] -= f * M[r][j];
		}
		pivotCol[r++] = c;
	}
	const x = new Array<number>(k).fill(0);
	for (let i = 0; i < r; i++) x[pivotCol[i]] = M[i][k] / M[i][pivotCol[i]];
	return x;
}

/** Least-squares solution of A x ≈ b (A has rows = equations) through the normal equations. */
export function leastSquares(A: number[][], b: number[]): number[] {
	const cols = A[0]?.length ?? 0;
	const AtA = Array.from({ length: cols }, () => new Array<number>(cols).fill(0));
	const Atb = new Array<number>(cols).fill(0);
	for (let i = 0; i < A.length; i++)
		for (let p = 0; p < cols; p++) {
			Atb[p] += A[i][p] * b[i];
			for (let q = 0; q < cols; q++) AtA[p][q] += A[i][p] * A[i][q];
		}
	return solveDense(AtA, Atb);
}
