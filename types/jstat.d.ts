/** The parts of jstat 1.9.6 the tests use (it ships no types). */
declare module 'jstat' {
  interface Distribution1 {
    cdf(x: number, a: number): number;
    inv(p: number, a: number): number;
  }
  interface Distribution2 {
    cdf(x: number, a: number, b: number): number;
    inv(p: number, a: number, b: number): number;
  }
  const jStat: {
    normal: Distribution2;
    chisquare: Distribution1;
    gammaln(x: number): number;
  };
  export default jStat;
}
