// One command for the whole shop: migrate, seed the demo, build, serve on http://localhost:4321.
import { spawn } from 'node:child_process';
import { existsSync } from 'node:fs';

process.env.ASTRO_TELEMETRY_DISABLED = '1';
const port = process.env.PORT ?? '4321';
const host = process.env.HOST ?? '127.0.0.1';

function run(command, args, extraEnv = {}) {
  return new Promise((resolve, reject) => {
    const child = spawn(command, args, { stdio: 'inherit', env: { ...process.env, ...extraEnv } });
    child.on('exit', (code, signal) => (code === 0 ? resolve() : reject(new Error(`${command} ${args.join(' ')} exited with ${code ?? signal}`))));
  });
}

try {
  await run(process.execPath, ['--import', 'tsx', 'scripts/seed.ts']);
  if (process.env.SKIP_BUILD !== '1' || !existsSync('dist/server/entry.mjs')) {
    await run(process.execPath, ['node_modules/astro/astro.js', 'build']);
  }
  console.log(`\nStillmark is running at http://localhost:${port}\n`);
  const server = spawn(process.execPath, ['dist/server/entry.mjs'], { stdio: 'inherit', env: { ...process.env, HOST: host, PORT: port } });
  for (const signal of ['SIGINT', 'SIGTERM']) process.on(signal, () => server.kill(signal));
  server.on('exit', (code) => process.exit(code ?? 0));
} catch (error) {
  console.error(error instanceof Error ? error.message : error);
  process.exit(1);
}
