// Builds the app for the bench into bench/.dist (never the default dist/, which others use), with its
// own cache folder, so node_modules still resolve from the repository root.
import { build } from 'astro';

process.env.ASTRO_TELEMETRY_DISABLED = '1';
await build({ root: process.cwd(), outDir: './bench/.dist', cacheDir: './bench/.cache', logLevel: 'warn' });
