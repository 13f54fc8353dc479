// What each built-in parameter is in the trade's words: asymptotes (plateaus) and rates, so that a parameter the data
// cannot determine is reported as "the data do not reach the plateau" or "the rate is not determined" (docs/problems.md).
export interface ParamRoles {
  /** parameters that are a level the curve approaches (plateau, asymptote, carrying capacity) */
  asymptotes: string[];
  /** parameters that set how fast the curve changes (rate constant, slope, steepness) */
  rates: string[];
}

export const ROLES: Record<string, ParamRoles> = {
  exponential_offset: { asymptotes: ['C'], rates: ['k'] },
  double_exponential: { asymptotes: [], rates: ['k1', 'k2'] },
  michaelis_menten: { asymptotes: ['Vmax'], rates: [] },
  hill: { asymptotes: ['Vmax'], rates: ['n'] },
  logistic3: { asymptotes: ['K'], rates: ['r'] },
  logistic4: { asymptotes: ['lower', 'upper'], rates: ['slope'] },
  logistic5: { asymptotes: ['lower', 'upper'], rates: ['slope'] },
  gompertz: { asymptotes: ['K'], rates: ['r'] },
  richards: { asymptotes: ['K'], rates: ['r'] },
  weibull_growth: { asymptotes: ['upper'], rates: ['shape'] },
  asymptotic: { asymptotes: ['upper'], rates: ['k'] },
  exponential: { asymptotes: [], rates: ['k'] },
};

/** Role of a parameter of a built-in, or null (formulas written by the user have no roles). */
export function roleOf(builtin: string | undefined, param: string): 'asymptote' | 'rate' | null {
  const r = builtin ? ROLES[builtin] : undefined;
  if (!r) return null;
  return r.asymptotes.includes(param) ? 'asymptote' : r.rates.includes(param) ? 'rate' : null;
}
