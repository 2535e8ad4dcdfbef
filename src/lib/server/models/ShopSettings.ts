import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** The shop's settings: a single row with id 1. */
export class ShopSettings extends Model<InferAttributes<ShopSettings>, InferCreationAttributes<ShopSettings>> {
  declare id: CreationOptional<number>;
  declare shopName: string;
  declare photographerName: string;
  declare tagline: string;
  declare currency: string;
  declare targetPpi: number;
  declare floorPpi: number;
  declare wallFloorPpi: number;
  declare viewingDistanceFactor: number;
  declare watermarkText: string;
  declare limitedEditionPremiumBp: number;
  declare vatRateBp: CreationOptional<number>;
  declare reservationMinutes: CreationOptional<number>;
  declare labPpi: CreationOptional<number>;
  declare labFormat: CreationOptional<'tiff16' | 'jpeg'>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    ShopSettings.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        shopName: DataTypes.STRING,
        photographerName: DataTypes.STRING,
        tagline: DataTypes.STRING,
        currency: DataTypes.STRING(3),
        targetPpi: DataTypes.INTEGER,
        floorPpi: DataTypes.INTEGER,
        wallFloorPpi: DataTypes.INTEGER,
        viewingDistanceFactor: DataTypes.REAL,
        watermarkText: DataTypes.STRING,
        limitedEditionPremiumBp: DataTypes.INTEGER,
        vatRateBp: { type: DataTypes.INTEGER, defaultValue: 2000 },
        reservationMinutes: { type: DataTypes.INTEGER, defaultValue: 30 },
        labPpi: { type: DataTypes.INTEGER, defaultValue: 300 },
        labFormat: { type: DataTypes.STRING, defaultValue: 'tiff16' },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'shop_settings' },
    );
  }
}
