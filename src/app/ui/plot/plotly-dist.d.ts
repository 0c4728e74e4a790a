declare module 'plotly.js-dist-min' {
  const plotly: unknown;
  export default plotly;
}
