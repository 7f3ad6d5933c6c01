/** Python helper files bundled as text (esbuild's text loader in scripts/build.mjs; the vitest configs do the same). */
declare module '*.py' {
  const source: string;
  export default source;
}
