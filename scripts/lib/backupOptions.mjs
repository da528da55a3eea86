// The options the backup and restore commands share: which cluster (the local one by
// default) and which file. Plain JavaScript (runs before `npm ci`).
import path from 'node:path';
import { parseArgs } from 'node:util';

/**
 * Reads `--file`, `--port` and `--data-root` (the folder holding the cluster, as the
 * start and test commands lay it out). Defaults: CROSSGRAIN_BACKUP_FILE, the
 * CROSSGRAIN_DB_PORT cluster, and CROSSGRAIN_DATA_DIR (`.data`).
 */
export function backupOptions(root, argv = process.argv.slice(2)) {
  const { values } = parseArgs({
    args: argv,
    options: { file: { type: 'string' }, port: { type: 'string' }, 'data-root': { type: 'string' } },
    strict: true,
  });
  const dataRoot = path.resolve(root, values['data-root'] ?? process.env.CROSSGRAIN_DATA_DIR ?? '.data');
  const port = values.port ?? process.env.CROSSGRAIN_DB_PORT;
  const file = values.file ?? process.env.CROSSGRAIN_BACKUP_FILE;
  return {
    file: file ? path.resolve(process.cwd(), file) : null,
    cluster: { dataRoot, ...(port ? { port: Number(port) } : {}) },
    dataRoot,
  };
}
