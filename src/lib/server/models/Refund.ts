import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** Where a refund's money goes: an order line (or shipping, lineId null); `whole` takes back what the line gave. */
export interface RefundAllocation {
  lineId: number | null;
  amount: number;
  whole: boolean;
}

export type RefundStatus = 'pending' | 'succeeded' | 'failed';

/** One refund asked of the payment service; the order's amounts change only when it is settled by the service's event. */
export class Refund extends Model<InferAttributes<Refund>, InferCreationAttributes<Refund>> {
  declare id: CreationOptional<number>;
  declare orderId: number;
  declare idempotencyKey: string;
  declare stripeRefundId: string | null;
  declare amount: number;
  declare currency: string;
  declare reason: string;
  declare allocations: RefundAllocation[];
  declare status: CreationOptional<RefundStatus>;
  declare failure: CreationOptional<string | null>;
  declare requestedBy: string | null;
  declare settledAt: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    Refund.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        orderId: DataTypes.INTEGER,
        idempotencyKey: DataTypes.STRING,
        stripeRefundId: DataTypes.STRING,
        amount: DataTypes.INTEGER,
        currency: DataTypes.STRING(3),
        reason: DataTypes.STRING,
        allocations: DataTypes.JSON,
        status: { type: DataTypes.STRING, defaultValue: 'pending' },
        failure: DataTypes.STRING,
        requestedBy: DataTypes.STRING,
        settledAt: DataTypes.DATE,
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'refunds' },
    );
  }
}
