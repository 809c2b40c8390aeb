/**
 * Minimal typings for jstat 1.9.6 (the package ships none). Only the functions Emberlot
 * calls are declared; add more here as they are used.
 */
declare module 'jstat' {
  interface JStatDistributions {
    chisquare: {
      inv(p: number, dof: number): number;
      cdf(x: number, dof: number): number;
    };
    binomial: {
      cdf(k: number, n: number, p: number): number;
      pdf(k: number, n: number, p: number): number;
    };
    beta: {
      inv(p: number, alpha: number, beta: number): number;
      cdf(x: number, alpha: number, beta: number): number;
    };
    normal: {
      cdf(x: number, mean: number, sd: number): number;
      inv(p: number, mean: number, sd: number): number;
    };
    studentt: {
      cdf(x: number, dof: number): number;
      inv(p: number, dof: number): number;
    };
    /** Ordinary least squares: endog = y, exog = rows of regressors (include a 1 for the intercept). */
    models: {
      ols(endog: number[], exog: number[][]): { coef: number[]; t: { se: number[] }; SSE: number; nobs: number };
    };
    gammafn(x: number): number;
    gammaln(x: number): number;
  }
  export const jStat: JStatDistributions;
}
