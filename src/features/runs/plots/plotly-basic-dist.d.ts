/** plotly.js-basic-dist ships no types; the factory of react-plotly.js takes it as unknown. */
declare module 'plotly.js-basic-dist' {
  const Plotly: unknown;
  export default Plotly;
}
