// @ts-check
import { defineConfig } from 'astro/config';
import node from '@astrojs/node';
import react from '@astrojs/react';
import tailwindcss from '@tailwindcss/vite';

export default defineConfig({
  output: 'server',
  adapter: node({ mode: 'standalone' }),
  integrations: [react()],
  // Astro refuses cross-site form posts and state-changing requests whose Origin differs.
  security: { checkOrigin: true },
  server: { host: '127.0.0.1', port: 4321 },
  // Stylesheets are served as files so the Content-Security-Policy needs no inline styles
  // for our own CSS.
  build: { inlineStylesheets: 'never' },
  vite: {
    plugins: [tailwindcss()],
    ssr: { external: ['pg', 'pg-hstore', 'sequelize', '@node-rs/argon2', 'pino', 'pino-pretty', 'nodemailer', 'pg-boss'] },
  },
});
