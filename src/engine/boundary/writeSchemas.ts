/**
 * Regenerates spec.schema.json and result.schema.json beside this file from the zod
 * schemas: `npm run -s engine -- --write-schemas` (a test fails while they are stale).
 */
import { writeFile } from 'node:fs/promises';
import { fileURLToPath } from 'node:url';
import { jsonSchemas } from './schemas.js';

const schemas = jsonSchemas();
const here = (name: string) => fileURLToPath(new URL(name, import.meta.url));
await writeFile(here('./spec.schema.json'), `${JSON.stringify(schemas.spec, null, 2)}\n`);
await writeFile(here('./result.schema.json'), `${JSON.stringify(schemas.result, null, 2)}\n`);
