import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from 'sequelize';
import type { OrderLine } from './OrderLine';
import type { ShippingAddress } from '../../checkout';

export type OrderStatus = 'pending_payment' | 'paid' | 'in_production' | 'shipped' | 'delivered' | 'expired' | 'cancelled' | 'refunded' | 'partly_refunded';

export class Order extends Model<InferAttributes<Order>, InferCreationAttributes<Order>> {
  declare id: CreationOptional<number>;
  declare number: string;
  declare userId: string | null;
  declare email: string;
  declare status: CreationOptional<OrderStatus>;
  declare currency: string;
  declare subtotal: number;
  declare shipping: number;
  declare taxIncluded: number;
  declare total: number;
  declare refunded: CreationOptional<number>;
  declare shippingRefunded: CreationOptional<number>;
  declare licenseeName: string | null;
  declare licenseeOrganisation: string | null;
  declare intendedUse: string | null;
  declare shippingAddress: ShippingAddress | null;
  declare stripeSessionId: string | null;
  declare stripePaymentIntentId: string | null;
  declare paidAt: Date | null;
  declare expiresAt: Date | null;
  declare note: string | null;
  declare productionAt: CreationOptional<Date | null>;
  declare carrier: CreationOptional<string | null>;
  declare trackingNumber: CreationOptional<string | null>;
  declare shippedAt: CreationOptional<Date | null>;
  declare deliveredAt: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare lines?: NonAttribute<OrderLine[]>;

  static initModel(sequelize: Sequelize): void {
    Order.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        number: DataTypes.STRING,
        userId: DataTypes.STRING,
        email: DataTypes.STRING,
        status: { type: DataTypes.STRING, defaultValue: 'pending_payment' },
        currency: DataTypes.STRING(3),
        subtotal: DataTypes.INTEGER,
        shipping: DataTypes.INTEGER,
        taxIncluded: DataTypes.INTEGER,
        total: DataTypes.INTEGER,
        refunded: { type: DataTypes.INTEGER, defaultValue: 0 },
        shippingRefunded: { type: DataTypes.INTEGER, defaultValue: 0 },
        licenseeName: DataTypes.STRING,
        licenseeOrganisation: DataTypes.STRING,
        intendedUse: DataTypes.TEXT,
        shippingAddress: DataTypes.JSON,
        stripeSessionId: DataTypes.STRING,
        stripePaymentIntentId: DataTypes.STRING,
        paidAt: DataTypes.DATE,
        expiresAt: DataTypes.DATE,
        note: DataTypes.TEXT,
        productionAt: DataTypes.DATE,
        carrier: DataTypes.STRING,
        trackingNumber: DataTypes.STRING,
        shippedAt: DataTypes.DATE,
        deliveredAt: DataTypes.DATE,
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'orders' },
    );
  }
}
