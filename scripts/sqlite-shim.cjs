// Bundled into dist/main/electron.cjs in place of `require('better-sqlite3')` (scripts/build.mjs).
// When scripts/start.mjs launches Electron from the repository it sets RAKELINE_SQLITE_BINDING to
// a copy of better-sqlite3's addon rebuilt for Electron's ABI (dist/native/...), so the Node-ABI
// build in node_modules stays as it is for the tests. Packaged apps leave it unset and use the
// addon electron-builder rebuilt in place.
'use strict';
const Database = require('better-sqlite3');

const binding = process.env.RAKELINE_SQLITE_BINDING;

function withBinding(options) {
  const o = options && typeof options === 'object' ? options : {};
  return o.nativeBinding ? o : { ...o, nativeBinding: binding };
}

module.exports = binding
  ? new Proxy(Database, {
      construct(target, args) {
        return new target(args[0], withBinding(args[1]));
      },
      apply(target, _self, args) {
        return new target(args[0], withBinding(args[1]));
      },
    })
  : Database;
