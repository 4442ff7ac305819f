// Module resolution hook for test/compiled-build.test.ts: any attempt to load a compiler (tsx,
// esbuild, typescript) or a TypeScript source fails loudly. Registered by no-compiler.mjs through
// `node --import`, which worker threads inherit.
const COMPILER = /^(tsx|esbuild|typescript)(\/|$)/;
export async function resolve(specifier, context, next) {
  if (COMPILER.test(specifier) || /\.[cm]?tsx?$/.test(specifier.split('?')[0])) {
    throw new Error(`a compiler or TypeScript source was loaded at run time: ${specifier}`);
  }
  return next(specifier, context);
}
