declare module 'plotly.js-dist' {
  const Plotly: unknown;
  export default Plotly;
}
