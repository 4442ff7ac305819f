// Writes docs/setup.schema.json from the zod schema of setup.json (app/log/schema.ts).
// Run: npx tsx scripts/gen-schema.ts   (test/log-schema.test.ts checks the committed file is current)
import { writeFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { setupJsonSchema } from '../app/log/schema';

export const SCHEMA_FILE = fileURLToPath(new URL('../docs/setup.schema.json', import.meta.url));

export function schemaText(): string {
  return JSON.stringify(setupJsonSchema(), null, 2) + '\n';
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  writeFileSync(SCHEMA_FILE, schemaText());
  console.log(`wrote ${SCHEMA_FILE}`);
}
