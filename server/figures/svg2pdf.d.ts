// svg2pdf.js's ES build (imported directly: the package's main UMD build fails in Node) has the
// package's own types.
declare module 'svg2pdf.js/dist/svg2pdf.es.min.js' {
  export { svg2pdf } from 'svg2pdf.js';
}
