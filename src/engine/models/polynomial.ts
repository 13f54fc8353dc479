// Polynomial models in the raw basis: c0 + c1*x + c2*x^2 + … + cn*x^n (DESIGN.md "Polynomials").

/** The formula text and coefficient names c0…cn of a polynomial of the given degree in `variable`. */
export function polynomialFormula(degree: number, variable = 'x'): { formula: string; params: string[] } {
  if (!Number.isInteger(degree) || degree < 0) {
    throw new Error(`polynomial degree must be a whole number ≥ 0, got ${degree}`);
  }
  const params: string[] = [];
  const terms: string[] = [];
  for (let k = 0; k <= degree; k++) {
    const c = `c${k}`;
    params.push(c);
    terms.push(k === 0 ? c : k === 1 ? `${c}*${variable}` : `${c}*${variable}^${k}`);
  }
  return { formula: terms.join(' + '), params };
}
