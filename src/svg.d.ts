/**
 * SVG files imported from TypeScript arrive as their markup text: the JupyterLab builder's
 * webpack configuration loads them as source assets.
 */
declare module '*.svg' {
  const markup: string;
  export default markup;
}
