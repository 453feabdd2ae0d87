// Minimal typings for reference libraries that ship none; only what the reference tests use.
declare module 'ml-regression-theil-sen' {
  export class TheilSenRegression {
    constructor(x: ArrayLike<number>, y: ArrayLike<number>);
    slope: number;
    intercept: number;
  }
}
declare module 'jstat' {
  const jstat: { jStat: { normal: { cdf(x: number, mean: number, sd: number): number } } };
  export default jstat;
}
