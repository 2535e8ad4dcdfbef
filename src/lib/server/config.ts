/** Server configuration, read once from the environment and checked with zod. */
import path from 'node:path';
import { z } from 'zod';

const envSchema = z.object({
  STILLMARK_DATA_DIR: z.string().min(1).optional(),
  DATABASE_PATH: z.string().min(1).optional(),
  UPLOADS_DIR: z.string().min(1).optional(),
  PUBLIC_ORIGIN: z.url().optional(),
  LOG_SQL: z.enum(['0', '1']).default('0'),
});

export interface ServerConfig {
  databasePath: string;
  uploadsDir: string;
  originalsDir: string;
  derivativesDir: string;
  publicOrigin: string;
  logSql: boolean;
}

let cached: ServerConfig | undefined;

export function loadConfig(env: NodeJS.ProcessEnv = process.env): ServerConfig {
  const parsed = envSchema.safeParse(env);
  if (!parsed.success) {
    const issues = parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ');
    throw new Error(`Invalid environment: ${issues}`);
  }
  const e = parsed.data;
  const root = path.resolve(e.STILLMARK_DATA_DIR ?? process.cwd());
  const uploadsDir = path.resolve(e.UPLOADS_DIR ?? path.join(root, 'uploads'));
  return {
    databasePath: path.resolve(e.DATABASE_PATH ?? path.join(root, 'db', 'stillmark.sqlite')),
    uploadsDir,
    originalsDir: path.join(uploadsDir, 'originals'),
    derivativesDir: path.join(uploadsDir, 'derivatives'),
    publicOrigin: e.PUBLIC_ORIGIN ?? 'http://localhost:4321',
    logSql: e.LOG_SQL === '1',
  };
}

export function config(): ServerConfig {
  cached ??= loadConfig();
  return cached;
}

/** Tests point the app at a temporary database and uploads folder. */
export function resetConfigForTests(): void {
  cached = undefined;
}
