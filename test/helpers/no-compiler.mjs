// `node --import ./no-compiler.mjs …`: see no-compiler-loader.mjs. The hook sees what the ES-module
// loader resolves; require() (the command line's CommonJS build, scripts/compiled.mjs loadCli) is
// watched here as well, on the main thread.
import Module, { register } from 'node:module';

register('./no-compiler-loader.mjs', import.meta.url);

const COMPILER = /^(tsx|esbuild|typescript)(\/|$)/;
const load = Module._load;
Module._load = function guardedLoad(request, ...rest) {
  if (COMPILER.test(request) || /\.[cm]?tsx?$/.test(String(request).split('?')[0])) {
    throw new Error(`a compiler or TypeScript source was loaded at run time: ${request}`);
  }
  return load.call(this, request, ...rest);
};
