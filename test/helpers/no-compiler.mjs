// `node --import ./no-compiler.mjs …`: see no-compiler-loader.mjs.
import { register } from 'node:module';

register('./no-compiler-loader.mjs', import.meta.url);
