/** Every mail sent about an order (receipt, shipping, refund, …), so Dispatch can see what the buyer was told and when. */
import { DataTypes, type QueryInterface } from 'sequelize';
import type { MigrationParams } from 'umzug';

type Migration = (params: MigrationParams<QueryInterface>) => Promise<void>;

export const up: Migration = async ({ context: qi }) => {
  await qi.sequelize.transaction(async (transaction) => {
    await qi.createTable('order_mails', {
      id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true, allowNull: false },
      order_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'orders', key: 'id' }, onDelete: 'CASCADE' },
      recipient: { type: DataTypes.STRING, allowNull: false },
      subject: { type: DataTypes.STRING, allowNull: false },
      message_id: { type: DataTypes.STRING, allowNull: true },
      error: { type: DataTypes.STRING, allowNull: true },
      created_at: { type: DataTypes.DATE, allowNull: false },
    }, { transaction });
    await qi.addIndex('order_mails', ['order_id'], { transaction });
  });
};

export const down: Migration = async ({ context: qi }) => {
  await qi.dropTable('order_mails');
};
