/**
 * The mail outbox: a message the relay did not take is kept here and sent again with backoff until it is
 * taken, so a relay that is down loses nothing. `order_mails.state` tells Dispatch whether an order's
 * mail was sent, is queued for another try, or was refused for good.
 */
import { DataTypes, type QueryInterface } from 'sequelize';
import type { MigrationParams } from 'umzug';

type Migration = (params: MigrationParams<QueryInterface>) => Promise<void>;

export const up: Migration = async ({ context: qi }) => {
  const sequelize = qi.sequelize;
  await sequelize.transaction(async (transaction) => {
    await qi.createTable('mail_outbox', {
      id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true, allowNull: false },
      // The Message-ID is chosen before the first try and kept for every retry, so a copy sent twice reads as one.
      message_id: { type: DataTypes.STRING, allowNull: false, unique: true },
      recipient: { type: DataTypes.STRING, allowNull: false },
      subject: { type: DataTypes.STRING(998), allowNull: false },
      text: { type: DataTypes.TEXT, allowNull: false },
      html: { type: DataTypes.TEXT, allowNull: true },
      order_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'orders', key: 'id' }, onDelete: 'SET NULL' },
      state: { type: DataTypes.STRING, allowNull: false, defaultValue: 'queued' },
      attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
      last_error: { type: DataTypes.STRING, allowNull: true },
      next_attempt_at: { type: DataTypes.DATE, allowNull: false },
      // A process sending the row holds it until then, so two processes never send the same row at once.
      claimed_until: { type: DataTypes.DATE, allowNull: true },
      created_at: { type: DataTypes.DATE, allowNull: false },
    }, { transaction });
    await qi.addIndex('mail_outbox', ['state', 'next_attempt_at'], { transaction });
    for (const event of ['INSERT', 'UPDATE']) {
      await sequelize.query(
        `CREATE TRIGGER check_mail_outbox_${event.toLowerCase()} BEFORE ${event} ON mail_outbox FOR EACH ROW
         WHEN NEW.state NOT IN ('queued','failed') OR NEW.attempts < 1
         BEGIN SELECT RAISE(ABORT, 'bad mail outbox row'); END`,
        { transaction },
      );
    }

    await sequelize.query("ALTER TABLE order_mails ADD COLUMN state TEXT NOT NULL DEFAULT 'sent'", { transaction });
    await sequelize.query("UPDATE order_mails SET state = 'failed' WHERE error IS NOT NULL", { transaction });
    for (const event of ['INSERT', 'UPDATE']) {
      await sequelize.query(
        `CREATE TRIGGER check_order_mails_state_${event.toLowerCase()} BEFORE ${event} ON order_mails FOR EACH ROW
         WHEN NEW.state NOT IN ('sent','queued','failed')
         BEGIN SELECT RAISE(ABORT, 'bad order mail state'); END`,
        { transaction },
      );
    }
  });
};

export const down: Migration = async ({ context: qi }) => {
  const sequelize = qi.sequelize;
  await sequelize.transaction(async (transaction) => {
    for (const event of ['insert', 'update']) {
      await sequelize.query(`DROP TRIGGER IF EXISTS check_order_mails_state_${event}`, { transaction });
      await sequelize.query(`DROP TRIGGER IF EXISTS check_mail_outbox_${event}`, { transaction });
    }
    await sequelize.query('ALTER TABLE order_mails DROP COLUMN state', { transaction });
    await qi.dropTable('mail_outbox', { transaction });
  });
};
