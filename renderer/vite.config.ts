// Vite build of the Rakeline renderer (scripts/build.mjs uses this file).
// base './' keeps every asset URL relative, so the same build loads from file:// in Electron and
// from http://127.0.0.1 in browser mode. No remote content: everything is bundled.
import { fileURLToPath } from 'node:url';
import { defineConfig, type Plugin } from 'vite';
import react from '@vitejs/plugin-react';

const root = fileURLToPath(new URL('.', import.meta.url));

/** Module scripts loaded from file:// must not carry `crossorigin` (the file origin is opaque). */
function noCrossorigin(): Plugin {
  return {
    name: 'rakeline-no-crossorigin',
    enforce: 'post',
    transformIndexHtml(html) {
      return html.replace(/\s+crossorigin(=["'][^"']*["'])?/g, '');
    },
  };
}

export default defineConfig({
  root,
  base: './',
  plugins: [react(), noCrossorigin()],
  build: {
    outDir: fileURLToPath(new URL('../dist/renderer', import.meta.url)),
    emptyOutDir: true,
    target: 'es2022',
    sourcemap: false,
    // Inlined assets would become data: URLs; keep files so the CSP stays 'self' only.
    assetsInlineLimit: 0,
    chunkSizeWarningLimit: 2000,
    modulePreload: { polyfill: false },
  },
  worker: { format: 'es' },
  server: { host: '127.0.0.1' },
});
