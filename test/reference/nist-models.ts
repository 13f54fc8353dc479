// The 27 NIST StRD nonlinear models written in Curvewright's formula language (transcribed from the model line of each NIST .dat file).

export interface NistModel {
  formula: string;
  variables: string[];
  /** the spec's data.y when it is not the y column: Nelson is fitted on log(y) */
  y?: string;
}

const RATIONAL33 = '(b1 + b2*x + b3*x^2 + b4*x^3) / (1 + b5*x + b6*x^2 + b7*x^3)';
const LANCZOS = 'b1*exp(-b2*x) + b3*exp(-b4*x) + b5*exp(-b6*x)';
const GAUSS = 'b1*exp(-b2*x) + b3*exp(-(x - b4)^2 / b5^2) + b6*exp(-(x - b7)^2 / b8^2)';
const CHWIRUT = 'exp(-b1*x) / (b2 + b3*x)';
const MISRA1A = 'b1*(1 - exp(-b2*x))';

export const NIST_MODELS: Record<string, NistModel> = {
  Misra1a: { formula: MISRA1A, variables: ['x'] },
  Chwirut2: { formula: CHWIRUT, variables: ['x'] },
  Chwirut1: { formula: CHWIRUT, variables: ['x'] },
  Lanczos3: { formula: LANCZOS, variables: ['x'] },
  Gauss1: { formula: GAUSS, variables: ['x'] },
  Gauss2: { formula: GAUSS, variables: ['x'] },
  DanWood: { formula: 'b1*x^b2', variables: ['x'] },
  Misra1b: { formula: 'b1*(1 - (1 + b2*x/2)^(-2))', variables: ['x'] },
  Kirby2: { formula: '(b1 + b2*x + b3*x^2) / (1 + b4*x + b5*x^2)', variables: ['x'] },
  Hahn1: { formula: RATIONAL33, variables: ['x'] },
  Nelson: { formula: 'b1 - b2*x1*exp(-b3*x2)', variables: ['x1', 'x2'], y: 'log(y)' },
  MGH17: { formula: 'b1 + b2*exp(-x*b4) + b3*exp(-x*b5)', variables: ['x'] },
  Lanczos1: { formula: LANCZOS, variables: ['x'] },
  Lanczos2: { formula: LANCZOS, variables: ['x'] },
  Gauss3: { formula: GAUSS, variables: ['x'] },
  Misra1c: { formula: 'b1*(1 - (1 + 2*b2*x)^(-0.5))', variables: ['x'] },
  Misra1d: { formula: 'b1*b2*x*((1 + b2*x)^(-1))', variables: ['x'] },
  Roszman1: { formula: 'b1 - b2*x - atan(b3/(x - b4))/pi', variables: ['x'] },
  ENSO: {
    formula:
      'b1 + b2*cos(2*pi*x/12) + b3*sin(2*pi*x/12) + b5*cos(2*pi*x/b4) + b6*sin(2*pi*x/b4) + b8*cos(2*pi*x/b7) + b9*sin(2*pi*x/b7)',
    variables: ['x'],
  },
  MGH09: { formula: 'b1*(x^2 + x*b2) / (x^2 + x*b3 + b4)', variables: ['x'] },
  Thurber: { formula: RATIONAL33, variables: ['x'] },
  BoxBOD: { formula: MISRA1A, variables: ['x'] },
  Rat42: { formula: 'b1 / (1 + exp(b2 - b3*x))', variables: ['x'] },
  MGH10: { formula: 'b1*exp(b2/(x + b3))', variables: ['x'] },
  Eckerle4: { formula: '(b1/b2) * exp(-0.5*((x - b3)/b2)^2)', variables: ['x'] },
  Rat43: { formula: 'b1 / ((1 + exp(b2 - b3*x))^(1/b4))', variables: ['x'] },
  Bennett5: { formula: 'b1*(b2 + x)^(-1/b3)', variables: ['x'] },
};
