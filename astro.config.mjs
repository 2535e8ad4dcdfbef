// @ts-check
import { defineConfig } from 'astro/config';
import node from '@astrojs/node';
import react from '@astrojs/react';
import tailwind from '@astrojs/tailwind';

export default defineConfig({
  output: 'server',
  adapter: node({ mode: 'standalone' }),
  integrations: [react(), tailwind({ applyBaseStyles: false })],
  server: { host: '127.0.0.1', port: 4321 },
  security: { checkOrigin: true },
  // Paths under /media are served by an endpoint with their own long-lived cache headers.
  build: { inlineStylesheets: 'auto' },
  vite: {
    ssr: { external: ['sequelize', 'sqlite3', 'sharp', 'umzug'] },
  },
});
