/** Print fulfilment on the order: when production started, the carrier and tracking number, shipped and delivered times. */
import { DataTypes, type QueryInterface } from 'sequelize';
import type { MigrationParams } from 'umzug';

type Migration = (params: MigrationParams<QueryInterface>) => Promise<void>;

const COLUMNS = ['production_at', 'carrier', 'tracking_number', 'shipped_at', 'delivered_at'] as const;

export const up: Migration = async ({ context: qi }) => {
  await qi.sequelize.transaction(async (transaction) => {
    await qi.addColumn('orders', 'production_at', { type: DataTypes.DATE, allowNull: true }, { transaction });
    await qi.addColumn('orders', 'carrier', { type: DataTypes.STRING, allowNull: true }, { transaction });
    await qi.addColumn('orders', 'tracking_number', { type: DataTypes.STRING, allowNull: true }, { transaction });
    await qi.addColumn('orders', 'shipped_at', { type: DataTypes.DATE, allowNull: true }, { transaction });
    await qi.addColumn('orders', 'delivered_at', { type: DataTypes.DATE, allowNull: true }, { transaction });
  });
};

export const down: Migration = async ({ context: qi }) => {
  await qi.sequelize.transaction(async (transaction) => {
    for (const column of [...COLUMNS].reverse()) await qi.removeColumn('orders', column, { transaction });
  });
};
