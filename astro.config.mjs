// @ts-check
import { defineConfig } from 'astro/config';
import node from '@astrojs/node';
import react from '@astrojs/react';
import tailwindcss from '@tailwindcss/vite';

// Host names the server believes in its Host header (and so in url.origin, which the
// origin checks compare against). Loopback always; the public host when configured at
// build time through CROSSGRAIN_PUBLIC_URL.
/** @type {{ hostname: string; protocol?: string }[]} */
const allowedDomains = [{ hostname: '127.0.0.1' }, { hostname: 'localhost' }];
if (process.env.CROSSGRAIN_PUBLIC_URL) {
  const publicUrl = new URL(process.env.CROSSGRAIN_PUBLIC_URL);
  allowedDomains.push({ hostname: publicUrl.hostname, protocol: publicUrl.protocol.replace(':', '') });
}

export default defineConfig({
  output: 'server',
  // The server around the app is scripts/serve.mjs (processes per core, the built client files).
  adapter: node({ mode: 'middleware' }),
  integrations: [react()],
  // Astro refuses cross-site form posts and state-changing requests whose Origin differs.
  security: { checkOrigin: true, allowedDomains },
  server: { host: '127.0.0.1', port: 4321 },
  // Stylesheets are served as files so the Content-Security-Policy needs no inline styles
  // for our own CSS.
  build: { inlineStylesheets: 'never' },
  vite: {
    plugins: [tailwindcss()],
    ssr: { external: ['pg', 'pg-hstore', 'sequelize', '@node-rs/argon2', 'pino', 'pino-pretty', 'nodemailer', 'pg-boss'] },
  },
});
