// jstat ships no types; only the Student-t inverse is used, as an outside reference for PS-2 Table 2-1.
declare module 'jstat' {
  const jStat: {
    studentt: { inv(p: number, degreesOfFreedom: number): number };
  };
  export default jStat;
}
