// The parts of jstat (which ships no types) that Ratchet uses.
declare module 'jstat' {
  interface JStat {
    studentt: {
      /** Quantile: x with P(T ≤ x) = p for ν degrees of freedom (real ν allowed). */
      inv(p: number, dof: number): number
      cdf(x: number, dof: number): number
    }
    normal: {
      inv(p: number, mean: number, std: number): number
      cdf(x: number, mean: number, std: number): number
    }
  }
  const jStat: JStat & { jStat: JStat }
  export default jStat
}
