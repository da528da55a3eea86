import pino from 'pino';
import { env, isProduction } from './env';

/**
 * The one logger. JSON lines on stdout; pretty-printed in development when pino-pretty is
 * installed. Log identifiers and counts, never secrets or cohort values: the redact list
 * is a safety net, not permission.
 */
export const logger = pino({
  // Tests are quiet unless LOG_LEVEL asks otherwise (the test server logs errors to a file).
  level: env.CROSSGRAIN_ENV === 'test' && !process.env.LOG_LEVEL ? 'silent' : env.LOG_LEVEL,
  base: { app: 'crossgrain' },
  redact: {
    paths: ['password', '*.password', 'token', '*.token', 'cookie', '*.cookie', 'req.headers.cookie', 'req.headers.authorization'],
    censor: '[redacted]',
  },
  ...(isProduction || process.env.CROSSGRAIN_LOG_FORMAT === 'json'
    ? {}
    : { transport: { target: 'pino-pretty', options: { colorize: true, singleLine: true } } }),
});
