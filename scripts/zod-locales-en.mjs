// Stands in for zod's locales/index.js in the compiled build (scripts/build.mjs, plugin
// zodEnglishOnly): only the English messages Rakeline shows, not 50 languages it never loads
// (358 KiB less JavaScript to compile at every start). zod registers English itself on first use.
export { default as en } from 'zod/v4/locales/en.js';
