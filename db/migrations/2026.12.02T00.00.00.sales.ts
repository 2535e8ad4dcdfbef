/**
 * Taking orders to their end and keeping the record: refunds (each one requested once by its
 * idempotency key, settled by the payment service's event), per-line refunded amounts, lab packs for
 * print lines, custom licence quotes, licence revocation, and the audit trail of every change to
 * money, rights or roles.
 */
import { DataTypes, type QueryInterface } from 'sequelize';
import type { MigrationParams } from 'umzug';

type Migration = (params: MigrationParams<QueryInterface>) => Promise<void>;

const id = { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true, allowNull: false };
const timestamps = {
  created_at: { type: DataTypes.DATE, allowNull: false },
  updated_at: { type: DataTypes.DATE, allowNull: false },
};

export const up: Migration = async ({ context: qi }) => {
  const sequelize = qi.sequelize;
  await sequelize.transaction(async (transaction) => {
    // The lab's file: made at exactly print size × lab_ppi, as a 16-bit TIFF or a quality-100 JPEG.
    await qi.addColumn('shop_settings', 'lab_ppi', { type: DataTypes.INTEGER, allowNull: false, defaultValue: 300 }, { transaction });
    await qi.addColumn('shop_settings', 'lab_format', { type: DataTypes.STRING, allowNull: false, defaultValue: 'tiff16' }, { transaction });

    await qi.addColumn('orders', 'shipping_refunded', { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 }, { transaction });
    await qi.addColumn('order_lines', 'refunded', { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 }, { transaction });
    await qi.addColumn('order_lines', 'lab_pack', { type: DataTypes.JSON, allowNull: true }, { transaction });
    await qi.addColumn('order_lines', 'licence_quote_id', { type: DataTypes.STRING, allowNull: true }, { transaction });
    await qi.addColumn('licences', 'revoked_at', { type: DataTypes.DATE, allowNull: true }, { transaction });
    await qi.addColumn('licences', 'revoked_reason', { type: DataTypes.STRING, allowNull: true }, { transaction });

    await qi.createTable('refunds', {
      id,
      order_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'orders', key: 'id' }, onDelete: 'RESTRICT' },
      idempotency_key: { type: DataTypes.STRING, allowNull: false, unique: true },
      stripe_refund_id: { type: DataTypes.STRING, allowNull: true, unique: true },
      amount: { type: DataTypes.INTEGER, allowNull: false },
      currency: { type: DataTypes.STRING(3), allowNull: false },
      reason: { type: DataTypes.STRING, allowNull: false },
      // [{ lineId: number | null (null = shipping), amount, whole }]
      allocations: { type: DataTypes.JSON, allowNull: false },
      status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'pending' },
      failure: { type: DataTypes.STRING, allowNull: true },
      requested_by: { type: DataTypes.STRING, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
      settled_at: { type: DataTypes.DATE, allowNull: true },
      ...timestamps,
    }, { transaction });
    await qi.addIndex('refunds', ['order_id'], { transaction });

    await qi.createTable('licence_quotes', {
      id: { type: DataTypes.STRING, primaryKey: true, allowNull: false },
      work_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'works', key: 'id' }, onDelete: 'RESTRICT' },
      user_id: { type: DataTypes.STRING, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' },
      email: { type: DataTypes.STRING, allowNull: false },
      licensee_name: { type: DataTypes.STRING, allowNull: false },
      licensee_organisation: { type: DataTypes.STRING, allowNull: true },
      // What the buyer asked for, in their words and in fields.
      request: { type: DataTypes.JSON, allowNull: false },
      status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'requested' },
      // What the photographer offered: LicenceTerms plus exclusivity, and the price.
      terms: { type: DataTypes.JSON, allowNull: true },
      price: { type: DataTypes.INTEGER, allowNull: true },
      currency: { type: DataTypes.STRING(3), allowNull: true },
      reply: { type: DataTypes.TEXT, allowNull: true },
      answered_by: { type: DataTypes.STRING, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
      answered_at: { type: DataTypes.DATE, allowNull: true },
      expires_at: { type: DataTypes.DATE, allowNull: true },
      order_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'orders', key: 'id' }, onDelete: 'SET NULL' },
      ...timestamps,
    }, { transaction });
    await qi.addIndex('licence_quotes', ['user_id'], { transaction });
    await qi.addIndex('licence_quotes', ['status'], { transaction });

    await qi.createTable('audit_events', {
      id,
      actor_id: { type: DataTypes.STRING, allowNull: true },
      actor_email: { type: DataTypes.STRING, allowNull: true },
      action: { type: DataTypes.STRING, allowNull: false },
      subject_type: { type: DataTypes.STRING, allowNull: false },
      subject_id: { type: DataTypes.STRING, allowNull: false },
      order_id: { type: DataTypes.INTEGER, allowNull: true },
      user_id: { type: DataTypes.STRING, allowNull: true },
      before: { type: DataTypes.JSON, allowNull: true },
      after: { type: DataTypes.JSON, allowNull: true },
      created_at: { type: DataTypes.DATE, allowNull: false },
    }, { transaction });
    await qi.addIndex('audit_events', ['order_id'], { transaction });
    await qi.addIndex('audit_events', ['user_id'], { transaction });
    await qi.addIndex('audit_events', ['subject_type', 'subject_id'], { transaction });
    // The trail is append-only: no row may change or go.
    await sequelize.query(`CREATE TRIGGER audit_events_no_update BEFORE UPDATE ON audit_events BEGIN SELECT RAISE(ABORT, 'the audit trail cannot be changed'); END`, { transaction });
    await sequelize.query(`CREATE TRIGGER audit_events_no_delete BEFORE DELETE ON audit_events BEGIN SELECT RAISE(ABORT, 'the audit trail cannot be changed'); END`, { transaction });

    const checks: [string, string, string][] = [
      ['refunds', "NEW.amount < 1 OR NEW.status NOT IN ('pending','succeeded','failed')", 'bad refund'],
      ['order_lines', 'NEW.refunded < 0 OR NEW.refunded > NEW.subtotal', 'line refund out of range'],
      ['shop_settings', "NEW.lab_format NOT IN ('tiff16','jpeg') OR NEW.lab_ppi < 72 OR NEW.lab_ppi > 1200", 'bad lab settings'],
      ['licence_quotes', "NEW.status NOT IN ('requested','quoted','declined','paid','withdrawn') OR (NEW.price IS NOT NULL AND NEW.price < 1)", 'bad licence quote'],
    ];
    for (const [index, [table, condition, message]] of checks.entries()) {
      for (const event of ['INSERT', 'UPDATE']) {
        await sequelize.query(
          `CREATE TRIGGER check_sales_${index}_${table}_${event.toLowerCase()} BEFORE ${event} ON ${table}
           FOR EACH ROW WHEN ${condition} BEGIN SELECT RAISE(ABORT, '${message}'); END`,
          { transaction },
        );
      }
    }
    await sequelize.query(
      `CREATE TRIGGER check_sales_orders_shipping_refund BEFORE UPDATE ON orders FOR EACH ROW
       WHEN NEW.shipping_refunded < 0 OR NEW.shipping_refunded > NEW.shipping
       BEGIN SELECT RAISE(ABORT, 'shipping refund out of range'); END`,
      { transaction },
    );
  });
};

export const down: Migration = async ({ context: qi }) => {
  await qi.sequelize.transaction(async (transaction) => {
    await qi.sequelize.query('DROP TRIGGER IF EXISTS check_sales_orders_shipping_refund', { transaction });
    for (const table of ['order_lines', 'shop_settings']) {
      for (const event of ['insert', 'update']) {
        const index = table === 'order_lines' ? 1 : 2;
        await qi.sequelize.query(`DROP TRIGGER IF EXISTS check_sales_${index}_${table}_${event}`, { transaction });
      }
    }
    for (const table of ['audit_events', 'licence_quotes', 'refunds']) await qi.dropTable(table, { transaction });
    await qi.removeColumn('licences', 'revoked_reason', { transaction });
    await qi.removeColumn('licences', 'revoked_at', { transaction });
    await qi.removeColumn('order_lines', 'licence_quote_id', { transaction });
    await qi.removeColumn('order_lines', 'lab_pack', { transaction });
    await qi.removeColumn('order_lines', 'refunded', { transaction });
    await qi.removeColumn('orders', 'shipping_refunded', { transaction });
    await qi.removeColumn('shop_settings', 'lab_format', { transaction });
    await qi.removeColumn('shop_settings', 'lab_ppi', { transaction });
  });
};
