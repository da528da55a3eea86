// The settings every part of the test run shares: a throwaway cluster on its own port and
// folder, and ports for the test server and the fake mail server that never collide with
// a development instance running beside it.
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');

export const testSettings = {
  root,
  dbPort: Number(process.env.CROSSGRAIN_TEST_DB_PORT ?? 54339),
  dataRoot: path.join(root, '.data', 'test'),
  appPort: Number(process.env.CROSSGRAIN_TEST_APP_PORT ?? 4329),
  smtpPort: Number(process.env.CROSSGRAIN_TEST_SMTP_PORT ?? 2529),
  artifacts: path.join(root, '.test-artifacts'),
};

/** The environment the tests, the test server and the migrations run with. */
export function testEnvironment() {
  return {
    CROSSGRAIN_ENV: 'test',
    ASTRO_TELEMETRY_DISABLED: '1',
    CROSSGRAIN_DB_PORT: String(testSettings.dbPort),
    CROSSGRAIN_SMTP_PORT: String(testSettings.smtpPort),
    CROSSGRAIN_DATA_DIR: testSettings.dataRoot,
    CROSSGRAIN_PUBLIC_URL: `http://127.0.0.1:${testSettings.appPort}`,
    CROSSGRAIN_TEST_APP_URL: `http://127.0.0.1:${testSettings.appPort}`,
    CROSSGRAIN_ARTIFACTS_DIR: testSettings.artifacts,
    CROSSGRAIN_LOG_FORMAT: 'json',
    // Small enough that the size-limit test streams only a few megabytes.
    CROSSGRAIN_UPLOAD_MAX_BYTES: String(8 * 1024 * 1024),
    // The demo's regime, stated so that the upload tests know which rules and wording to expect.
    CROSSGRAIN_PRIVACY_REGIME: 'uk',
    // Short, so the test that kills a worker sees its run marked failed quickly.
    CROSSGRAIN_RUN_STALE_SECONDS: '5',
  };
}
