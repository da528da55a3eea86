/** The small part of jstat (which ships no types) that the engine uses. */
declare module 'jstat' {
  interface JStatNormal {
    inv(p: number, mean: number, sd: number): number;
  }
  interface JStat {
    normal: JStatNormal;
  }
  const jStat: JStat;
  export default jStat;
}
