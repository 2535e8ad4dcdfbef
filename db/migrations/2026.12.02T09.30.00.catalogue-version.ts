/**
 * The catalogue's version: one counter that triggers raise on every insert, update or delete in the tables
 * Gallery pages and cart prices are made from. The server keeps what it made from the catalogue (Gallery
 * HTML for signed-out visitors, the price lists) for as long as the counter stands still, whichever process
 * or tool changed the data, so a published work still shows at once.
 */
import type { QueryInterface } from 'sequelize';
import type { MigrationParams } from 'umzug';

type Migration = (params: MigrationParams<QueryInterface>) => Promise<void>;

/** Every table whose rows a Gallery page or a cart quote reads. */
export const CATALOGUE_TABLES = [
  'shop_settings', 'series', 'works', 'licence_tiers', 'work_licence_prices', 'print_sizes', 'papers', 'editions', 'print_offers',
] as const;
const EVENTS = ['INSERT', 'UPDATE', 'DELETE'] as const;

export const up: Migration = async ({ context: qi }) => {
  const sequelize = qi.sequelize;
  await sequelize.transaction(async (transaction) => {
    await sequelize.query('CREATE TABLE catalogue_version (id INTEGER PRIMARY KEY CHECK (id = 1), version INTEGER NOT NULL)', { transaction });
    await sequelize.query('INSERT INTO catalogue_version (id, version) VALUES (1, 1)', { transaction });
    for (const table of CATALOGUE_TABLES) {
      for (const event of EVENTS) {
        await sequelize.query(
          `CREATE TRIGGER catalogue_version_${table}_${event.toLowerCase()} AFTER ${event} ON ${table}
           BEGIN UPDATE catalogue_version SET version = version + 1 WHERE id = 1; END`,
          { transaction },
        );
      }
    }
  });
};

export const down: Migration = async ({ context: qi }) => {
  const sequelize = qi.sequelize;
  await sequelize.transaction(async (transaction) => {
    for (const table of CATALOGUE_TABLES) {
      for (const event of EVENTS) await sequelize.query(`DROP TRIGGER IF EXISTS catalogue_version_${table}_${event.toLowerCase()}`, { transaction });
    }
    await sequelize.query('DROP TABLE IF EXISTS catalogue_version', { transaction });
  });
};
