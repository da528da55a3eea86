import pkg from '../../../package.json' with { type: 'json' };

/** The application's version, from package.json. */
export const APP_VERSION: string = pkg.version;
