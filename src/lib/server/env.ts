import { z } from 'zod';
import { DEFAULT_PRIVACY_REGIME, PRIVACY_REGIMES, privacyRegimeText, type PrivacyRegimeText } from '../privacyRegime';

/**
 * Every environment variable Crossgrain reads, declared once with a local default.
 * Feature code imports `env` from here and never reads `process.env` itself.
 *
 * This is a zod schema rather than Astro's `astro:env` because the same settings are
 * read by processes that Astro does not build: migrations, seeds and the job worker.
 */
const Env = z.object({
  CROSSGRAIN_ENV: z.enum(['development', 'test', 'production']).default('development'),
  HOST: z.string().default('127.0.0.1'),
  PORT: z.coerce.number().int().positive().default(4321),
  /** The address users reach the app at; used in links inside e-mails. */
  CROSSGRAIN_PUBLIC_URL: z.url().optional(),
  LOG_LEVEL: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']).default('info'),

  CROSSGRAIN_DB_HOST: z.string().default('127.0.0.1'),
  CROSSGRAIN_DB_PORT: z.coerce.number().int().positive().default(54329),
  CROSSGRAIN_DB_NAME: z.string().default('crossgrain'),
  CROSSGRAIN_DB_APP_USER: z.string().default('crossgrain_app'),
  CROSSGRAIN_DB_APP_PASSWORD: z.string().default('crossgrain-app-local'),
  CROSSGRAIN_DB_OWNER_USER: z.string().default('crossgrain_owner'),
  CROSSGRAIN_DB_OWNER_PASSWORD: z.string().default('crossgrain-owner-local'),
  CROSSGRAIN_DB_POOL_MAX: z.coerce.number().int().positive().default(10),

  /** `local` sends every message to the fake SMTP server on loopback; `smtp` to a real host. */
  CROSSGRAIN_MAIL_MODE: z.enum(['local', 'smtp']).default('local'),
  CROSSGRAIN_SMTP_HOST: z.string().default('127.0.0.1'),
  CROSSGRAIN_SMTP_PORT: z.coerce.number().int().positive().default(2525),
  CROSSGRAIN_SMTP_USER: z.string().optional(),
  CROSSGRAIN_SMTP_PASSWORD: z.string().optional(),
  CROSSGRAIN_SMTP_SECURE: z.stringbool().default(false),
  CROSSGRAIN_MAIL_FROM: z.string().default('Crossgrain <crossgrain@tern-valley.example>'),

  CROSSGRAIN_SESSION_IDLE_MINUTES: z.coerce.number().positive().default(30),
  CROSSGRAIN_SESSION_ABSOLUTE_HOURS: z.coerce.number().positive().default(12),
  CROSSGRAIN_SIGNIN_MAX_FAILURES_ACCOUNT: z.coerce.number().int().positive().default(5),
  CROSSGRAIN_SIGNIN_MAX_FAILURES_ADDRESS: z.coerce.number().int().positive().default(20),
  CROSSGRAIN_SIGNIN_WINDOW_MINUTES: z.coerce.number().positive().default(15),
  /** Reset links one account, or one client address, may ask for within the window. */
  CROSSGRAIN_RESET_MAX_PER_ACCOUNT: z.coerce.number().int().positive().default(3),
  CROSSGRAIN_RESET_MAX_PER_ADDRESS: z.coerce.number().int().positive().default(10),
  CROSSGRAIN_RESET_WINDOW_MINUTES: z.coerce.number().positive().default(60),
  /**
   * Addresses of the reverse proxies allowed to name the client in X-Forwarded-For
   * (comma-separated). Empty by default: the socket's address is the client's.
   */
  CROSSGRAIN_TRUSTED_PROXIES: z
    .string()
    .default('')
    .transform((value) => value.split(',').map((item) => item.trim()).filter((item) => item.length > 0)),

  /**
   * Which de-identification rules the upload screen applies and the product cites:
   * `us-hipaa` (Safe Harbor), `uk` (ICO anonymisation guidance, NHS data security) or
   * `generic`. See src/lib/privacyRegime.ts.
   */
  CROSSGRAIN_PRIVACY_REGIME: z.enum(PRIVACY_REGIMES).default(DEFAULT_PRIVACY_REGIME),

  CROSSGRAIN_UPLOAD_MAX_BYTES: z.coerce.number().int().positive().default(500 * 1024 * 1024),
  CROSSGRAIN_DATA_DIR: z.string().default('.data'),
  /** A running analysis whose worker has not reported for this long is marked failed. */
  CROSSGRAIN_RUN_STALE_SECONDS: z.coerce.number().int().positive().default(60),
  /** Worker threads the engine may use for one run (bootstrap and large fits). */
  CROSSGRAIN_ENGINE_THREADS: z.coerce.number().int().min(0).default(2),
});

export type Env = z.infer<typeof Env>;

function load(): Env {
  const parsed = Env.safeParse(process.env);
  if (!parsed.success) {
    const problems = parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ');
    throw new Error(`Invalid environment: ${problems}`);
  }
  const value = parsed.data;
  if (value.CROSSGRAIN_ENV === 'production') {
    for (const key of ['CROSSGRAIN_DB_APP_PASSWORD', 'CROSSGRAIN_DB_OWNER_PASSWORD'] as const) {
      if (!process.env[key]) throw new Error(`${key} must be set in production`);
    }
  }
  return value;
}

export const env: Env = load();

export const isProduction = env.CROSSGRAIN_ENV === 'production';

/** The privacy regime of this deployment, with its wording. */
export function privacyRegime(): PrivacyRegimeText {
  return privacyRegimeText(env.CROSSGRAIN_PRIVACY_REGIME);
}

/** The base URL for links in e-mails. */
export function publicUrl(): string {
  return env.CROSSGRAIN_PUBLIC_URL ?? `http://${env.HOST}:${env.PORT}`;
}
