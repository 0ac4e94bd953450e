// Small dense matrix helpers shared by the cluster-assigned analyses (row-major Float64Array).

/** A⁻¹ = L'⁻¹L⁻¹ from the Cholesky factor (m × m). */
export function inverseFromCholesky(L: Float64Array, m: number): Float64Array {
  const inv = new Float64Array(m * m); // L⁻¹, lower triangular
  for (let j = 0; j < m; j++) {
    inv[j * m + j] = 1 / L[j * m + j];
    for (let i = j + 1; i < m; i++) {
      let s = 0;
      for (let c = j; c < i; c++) s -= L[i * m + c] * inv[c * m + j];
      inv[i * m + j] = s / L[i * m + i];
    }
  }
  const out = new Float64Array(m * m);
  for (let i = 0; i < m; i++) {
    for (let j = 0; j <= i; j++) {
      let s = 0;
      for (let c = i; c < m; c++) s += inv[c * m + i] * inv[c * m + j];
      out[i * m + j] = s;
      out[j * m + i] = s;
    }
  }
  return out;
}
