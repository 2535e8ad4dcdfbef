/** umzug over the app's Sequelize instance: migrations in db/migrations, seeders in db/seeders. */
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import type { QueryInterface, Sequelize } from 'sequelize';
import { Umzug, SequelizeStorage, type MigrationParams } from 'umzug';

const here = path.dirname(fileURLToPath(import.meta.url));

type Step = (params: MigrationParams<QueryInterface>) => Promise<void>;

/** Loads a migration through this module's own import(), so tsx and vitest both compile the TypeScript. */
function resolve({ name, path: file, context }: { name: string; path?: string; context: QueryInterface }) {
  const load = async () => (await import(pathToFileURL(file!).href)) as { up: Step; down?: Step };
  return {
    name,
    up: async () => (await load()).up({ name, path: file, context }),
    down: async () => {
      const { down } = await load();
      if (!down) throw new Error(`${name} cannot be undone`);
      await down({ name, path: file, context });
    },
  };
}

export function migrator(sequelize: Sequelize): Umzug<QueryInterface> {
  return new Umzug({
    migrations: { glob: ['migrations/*.ts', { cwd: here }], resolve },
    context: sequelize.getQueryInterface(),
    storage: new SequelizeStorage({ sequelize, tableName: 'schema_migrations' }),
    logger: undefined,
  });
}

export function seeder(sequelize: Sequelize): Umzug<QueryInterface> {
  return new Umzug({
    migrations: { glob: ['seeders/*.seed.ts', { cwd: here }], resolve },
    context: sequelize.getQueryInterface(),
    storage: new SequelizeStorage({ sequelize, tableName: 'schema_seeds' }),
    logger: undefined,
  });
}
