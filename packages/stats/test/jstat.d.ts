// jstat ships no type declarations; the tests use it only to show where it is inaccurate.
declare module 'jstat' {
  interface Dist {
    cdf(x: number, ...params: number[]): number;
    pdf(x: number, ...params: number[]): number;
    inv(p: number, ...params: number[]): number;
  }
  const jstat: { jStat: { studentt: Dist; normal: Dist } };
  export default jstat;
}
