// jStat ships no types; the tests use only its normal CDF.
declare module "jstat" {
  const jstat: { jStat: { normal: { cdf: (x: number, mean: number, sd: number) => number } } };
  export default jstat;
}
