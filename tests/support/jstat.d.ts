// The part of jstat 1.9.6 (a general-purpose statistics library, devDependency) that the
// turn-on tests use as an outside check; the package ships no types.
declare module 'jstat' {
  const jStat: {
    /** regularised incomplete beta I_x(a, b) */
    ibeta(x: number, a: number, b: number): number;
    beta: {
      /** quantile of the beta distribution */
      inv(probability: number, a: number, b: number): number;
    };
  };
  export default jStat;
}
