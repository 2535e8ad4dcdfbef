/**
 * Accounts, as better-auth needs them (derived from `getAuthTables` with the admin plugin and database
 * rate limiting), in our snake_case naming; the Sequelize adapter maps better-auth's camelCase fields.
 */
import { DataTypes, type QueryInterface } from 'sequelize';
import type { MigrationParams } from 'umzug';

type Migration = (params: MigrationParams<QueryInterface>) => Promise<void>;

const id = { type: DataTypes.STRING, primaryKey: true, allowNull: false };
const timestamps = {
  created_at: { type: DataTypes.DATE, allowNull: false },
  updated_at: { type: DataTypes.DATE, allowNull: false },
};
const userRef = { type: DataTypes.STRING, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE', onUpdate: 'CASCADE' };

export const up: Migration = async ({ context: qi }) => {
  await qi.sequelize.transaction(async (transaction) => {
    await qi.createTable('users', {
      id,
      name: { type: DataTypes.STRING, allowNull: false },
      email: { type: DataTypes.STRING, allowNull: false, unique: true },
      email_verified: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      image: { type: DataTypes.STRING, allowNull: true },
      role: { type: DataTypes.STRING, allowNull: true, defaultValue: 'buyer' },
      banned: { type: DataTypes.BOOLEAN, allowNull: true, defaultValue: false },
      ban_reason: { type: DataTypes.STRING, allowNull: true },
      ban_expires: { type: DataTypes.DATE, allowNull: true },
      ...timestamps,
    }, { transaction });
    await qi.createTable('sessions', {
      id,
      expires_at: { type: DataTypes.DATE, allowNull: false },
      token: { type: DataTypes.STRING, allowNull: false, unique: true },
      ip_address: { type: DataTypes.STRING, allowNull: true },
      user_agent: { type: DataTypes.STRING, allowNull: true },
      user_id: userRef,
      impersonated_by: { type: DataTypes.STRING, allowNull: true },
      ...timestamps,
    }, { transaction });
    await qi.addIndex('sessions', ['user_id'], { transaction });
    await qi.createTable('accounts', {
      id,
      account_id: { type: DataTypes.STRING, allowNull: false },
      provider_id: { type: DataTypes.STRING, allowNull: false },
      user_id: userRef,
      access_token: { type: DataTypes.TEXT, allowNull: true },
      refresh_token: { type: DataTypes.TEXT, allowNull: true },
      id_token: { type: DataTypes.TEXT, allowNull: true },
      access_token_expires_at: { type: DataTypes.DATE, allowNull: true },
      refresh_token_expires_at: { type: DataTypes.DATE, allowNull: true },
      scope: { type: DataTypes.STRING, allowNull: true },
      password: { type: DataTypes.STRING, allowNull: true },
      ...timestamps,
    }, { transaction });
    await qi.addIndex('accounts', ['user_id'], { transaction });
    await qi.createTable('verifications', {
      id,
      identifier: { type: DataTypes.STRING, allowNull: false },
      value: { type: DataTypes.TEXT, allowNull: false },
      expires_at: { type: DataTypes.DATE, allowNull: false },
      ...timestamps,
    }, { transaction });
    await qi.addIndex('verifications', ['identifier'], { transaction });
    await qi.createTable('rate_limits', {
      id,
      key: { type: DataTypes.STRING, allowNull: false, unique: true },
      count: { type: DataTypes.INTEGER, allowNull: false },
      last_request: { type: DataTypes.BIGINT, allowNull: false },
    }, { transaction });
    await qi.sequelize.query(
      `CREATE TRIGGER users_role_check BEFORE UPDATE OF role ON users FOR EACH ROW
       WHEN NEW.role IS NOT NULL AND NEW.role NOT IN ('buyer','photographer','admin')
       BEGIN SELECT RAISE(ABORT, 'role must be buyer, photographer or admin'); END`,
      { transaction },
    );
    await qi.sequelize.query(
      `CREATE TRIGGER users_role_check_insert BEFORE INSERT ON users FOR EACH ROW
       WHEN NEW.role IS NOT NULL AND NEW.role NOT IN ('buyer','photographer','admin')
       BEGIN SELECT RAISE(ABORT, 'role must be buyer, photographer or admin'); END`,
      { transaction },
    );
  });
};

export const down: Migration = async ({ context: qi }) => {
  await qi.sequelize.transaction(async (transaction) => {
    for (const table of ['rate_limits', 'verifications', 'accounts', 'sessions', 'users']) await qi.dropTable(table, { transaction });
  });
};
