/**
 * Orders and what they deliver: order lines (prices and terms copied as they stood), limited-edition
 * numbers (unique per edition, so two buyers can never hold the same n/N), licences, download grants,
 * and the webhook events already handled (unique event id, so a repeated event changes nothing).
 */
import { DataTypes, type QueryInterface } from 'sequelize';
import type { MigrationParams } from 'umzug';

type Migration = (params: MigrationParams<QueryInterface>) => Promise<void>;

const id = { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true, allowNull: false };
const timestamps = {
  created_at: { type: DataTypes.DATE, allowNull: false },
  updated_at: { type: DataTypes.DATE, allowNull: false },
};

const ORDER_STATES = ['pending_payment', 'paid', 'in_production', 'shipped', 'delivered', 'expired', 'cancelled', 'refunded', 'partly_refunded'];

export const up: Migration = async ({ context: qi }) => {
  const sequelize = qi.sequelize;
  await sequelize.transaction(async (transaction) => {
    await qi.addColumn('shop_settings', 'vat_rate_bp', { type: DataTypes.INTEGER, allowNull: false, defaultValue: 2000 }, { transaction });
    await qi.addColumn('shop_settings', 'reservation_minutes', { type: DataTypes.INTEGER, allowNull: false, defaultValue: 30 }, { transaction });

    await qi.createTable('shipping_zones', {
      id,
      name: { type: DataTypes.STRING, allowNull: false },
      countries: { type: DataTypes.JSON, allowNull: false }, // ISO 3166-1 alpha-2 codes; ["*"] = everywhere else
      first_print: { type: DataTypes.INTEGER, allowNull: false },
      each_further_print: { type: DataTypes.INTEGER, allowNull: false },
      position: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      ...timestamps,
    }, { transaction });

    await qi.createTable('orders', {
      id,
      number: { type: DataTypes.STRING, allowNull: false, unique: true },
      user_id: { type: DataTypes.STRING, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
      email: { type: DataTypes.STRING, allowNull: false },
      status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'pending_payment' },
      currency: { type: DataTypes.STRING(3), allowNull: false },
      subtotal: { type: DataTypes.INTEGER, allowNull: false },
      shipping: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      tax_included: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      total: { type: DataTypes.INTEGER, allowNull: false },
      refunded: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      licensee_name: { type: DataTypes.STRING, allowNull: true },
      licensee_organisation: { type: DataTypes.STRING, allowNull: true },
      intended_use: { type: DataTypes.TEXT, allowNull: true },
      shipping_address: { type: DataTypes.JSON, allowNull: true },
      stripe_session_id: { type: DataTypes.STRING, allowNull: true, unique: true },
      stripe_payment_intent_id: { type: DataTypes.STRING, allowNull: true },
      paid_at: { type: DataTypes.DATE, allowNull: true },
      expires_at: { type: DataTypes.DATE, allowNull: true },
      note: { type: DataTypes.TEXT, allowNull: true },
      ...timestamps,
    }, { transaction });
    await qi.addIndex('orders', ['user_id', 'created_at'], { transaction });
    await qi.addIndex('orders', ['status'], { transaction });

    await qi.createTable('order_lines', {
      id,
      order_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'orders', key: 'id' }, onDelete: 'CASCADE' },
      kind: { type: DataTypes.STRING, allowNull: false },
      work_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'works', key: 'id' }, onDelete: 'RESTRICT' },
      licence_tier_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'licence_tiers', key: 'id' }, onDelete: 'RESTRICT' },
      print_offer_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'print_offers', key: 'id' }, onDelete: 'RESTRICT' },
      edition_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'editions', key: 'id' }, onDelete: 'RESTRICT' },
      mode: { type: DataTypes.STRING, allowNull: true },
      quantity: { type: DataTypes.INTEGER, allowNull: false },
      unit_price: { type: DataTypes.INTEGER, allowNull: false },
      subtotal: { type: DataTypes.INTEGER, allowNull: false },
      description: { type: DataTypes.STRING, allowNull: false },
      detail: { type: DataTypes.TEXT, allowNull: false },
      snapshot: { type: DataTypes.JSON, allowNull: false },
      status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'open' },
      ...timestamps,
    }, { transaction });
    await qi.addIndex('order_lines', ['order_id'], { transaction });

    await qi.createTable('edition_numbers', {
      id,
      edition_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'editions', key: 'id' }, onDelete: 'RESTRICT' },
      number: { type: DataTypes.INTEGER, allowNull: false },
      order_line_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'order_lines', key: 'id' }, onDelete: 'CASCADE' },
      state: { type: DataTypes.STRING, allowNull: false }, // reserved | sold
      reserved_until: { type: DataTypes.DATE, allowNull: true },
      certificate_serial: { type: DataTypes.STRING, allowNull: true, unique: true },
      ...timestamps,
    }, { transaction });
    await qi.addIndex('edition_numbers', ['edition_id', 'number'], { unique: true, transaction });

    await qi.createTable('licences', {
      id: { type: DataTypes.STRING, primaryKey: true, allowNull: false },
      order_line_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'order_lines', key: 'id' }, onDelete: 'RESTRICT' },
      work_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'works', key: 'id' }, onDelete: 'RESTRICT' },
      user_id: { type: DataTypes.STRING, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
      licensee_name: { type: DataTypes.STRING, allowNull: false },
      licensee_organisation: { type: DataTypes.STRING, allowNull: true },
      intended_use: { type: DataTypes.TEXT, allowNull: true },
      terms: { type: DataTypes.JSON, allowNull: false },
      starts_on: { type: DataTypes.STRING(10), allowNull: false },
      ends_on: { type: DataTypes.STRING(10), allowNull: true },
      price: { type: DataTypes.INTEGER, allowNull: false },
      currency: { type: DataTypes.STRING(3), allowNull: false },
      status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'active' },
      ...timestamps,
    }, { transaction });

    await qi.createTable('download_grants', {
      id,
      licence_id: { type: DataTypes.STRING, allowNull: false, references: { model: 'licences', key: 'id' }, onDelete: 'CASCADE' },
      expires_at: { type: DataTypes.DATE, allowNull: false },
      max_downloads: { type: DataTypes.INTEGER, allowNull: false },
      downloads: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      ...timestamps,
    }, { transaction });

    await qi.createTable('webhook_events', {
      id: { type: DataTypes.STRING, primaryKey: true, allowNull: false },
      type: { type: DataTypes.STRING, allowNull: false },
      order_id: { type: DataTypes.INTEGER, allowNull: true },
      created_at: { type: DataTypes.DATE, allowNull: false },
    }, { transaction });

    const checks: [string, string, string][] = [
      ['orders', `NEW.status NOT IN (${ORDER_STATES.map((s) => `'${s}'`).join(',')})`, 'unknown order state'],
      ['orders', 'NEW.total < 0 OR NEW.subtotal < 0 OR NEW.shipping < 0 OR NEW.refunded < 0 OR NEW.refunded > NEW.total', 'amounts out of range'],
      ['order_lines', "NEW.kind NOT IN ('licence','print') OR NEW.quantity < 1 OR NEW.unit_price < 0", 'bad order line'],
      ['edition_numbers', "NEW.state NOT IN ('reserved','sold') OR NEW.number < 1", 'bad edition number'],
      ['licences', "NEW.status NOT IN ('active','revoked')", 'bad licence status'],
    ];
    for (const [index, [table, condition, message]] of checks.entries()) {
      for (const event of ['INSERT', 'UPDATE']) {
        await sequelize.query(
          `CREATE TRIGGER check_orders_${index}_${table}_${event.toLowerCase()} BEFORE ${event} ON ${table}
           FOR EACH ROW WHEN ${condition} BEGIN SELECT RAISE(ABORT, '${message}'); END`,
          { transaction },
        );
      }
    }
    // N is the edition's size: a number above it can never be issued.
    await sequelize.query(
      `CREATE TRIGGER edition_numbers_within_n BEFORE INSERT ON edition_numbers FOR EACH ROW
       WHEN NEW.number > (SELECT total FROM editions WHERE id = NEW.edition_id)
       BEGIN SELECT RAISE(ABORT, 'edition number above N'); END`,
      { transaction },
    );
  });
};

export const down: Migration = async ({ context: qi }) => {
  await qi.sequelize.transaction(async (transaction) => {
    for (const table of ['webhook_events', 'download_grants', 'licences', 'edition_numbers', 'order_lines', 'orders', 'shipping_zones']) {
      await qi.dropTable(table, { transaction });
    }
    await qi.removeColumn('shop_settings', 'reservation_minutes', { transaction });
    await qi.removeColumn('shop_settings', 'vat_rate_bp', { transaction });
  });
};
