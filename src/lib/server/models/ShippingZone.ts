import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

export class ShippingZone extends Model<InferAttributes<ShippingZone>, InferCreationAttributes<ShippingZone>> {
  declare id: CreationOptional<number>;
  declare name: string;
  declare countries: string[];
  declare firstPrint: number;
  declare eachFurtherPrint: number;
  declare position: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    ShippingZone.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        name: DataTypes.STRING,
        countries: DataTypes.JSON,
        firstPrint: DataTypes.INTEGER,
        eachFurtherPrint: DataTypes.INTEGER,
        position: { type: DataTypes.INTEGER, defaultValue: 0 },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'shipping_zones' },
    );
  }
}
