import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** The lab files made for a print line: paths under the data folder's lab/ directory, and what they hold. */
export interface LabPackRecord {
  file: string;
  sheet: string;
  format: 'tiff16' | 'jpeg';
  widthPx: number;
  heightPx: number;
  ppi: number;
  bytes: number;
  preparedAt: string;
  /** How the picture was put on the sheet, and the part of the upright original printed (original pixels). */
  mode?: 'fill' | 'fit';
  crop?: { left: number; top: number; width: number; height: number };
}

/** One bought thing, with its price and terms copied as they stood when the order was made. */
export class OrderLine extends Model<InferAttributes<OrderLine>, InferCreationAttributes<OrderLine>> {
  declare id: CreationOptional<number>;
  declare orderId: number;
  declare kind: 'licence' | 'print';
  declare workId: number;
  declare licenceTierId: number | null;
  declare printOfferId: number | null;
  declare editionId: number | null;
  declare mode: 'fill' | 'fit' | null;
  declare quantity: number;
  declare unitPrice: number;
  declare subtotal: number;
  declare description: string;
  declare detail: string;
  declare snapshot: Record<string, unknown>;
  declare status: CreationOptional<string>;
  declare refunded: CreationOptional<number>;
  declare labPack: CreationOptional<LabPackRecord | null>;
  declare licenceQuoteId: CreationOptional<string | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    OrderLine.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        orderId: DataTypes.INTEGER,
        kind: DataTypes.STRING,
        workId: DataTypes.INTEGER,
        licenceTierId: DataTypes.INTEGER,
        printOfferId: DataTypes.INTEGER,
        editionId: DataTypes.INTEGER,
        mode: DataTypes.STRING,
        quantity: DataTypes.INTEGER,
        unitPrice: DataTypes.INTEGER,
        subtotal: DataTypes.INTEGER,
        description: DataTypes.STRING,
        detail: DataTypes.TEXT,
        snapshot: DataTypes.JSON,
        status: { type: DataTypes.STRING, defaultValue: 'open' },
        refunded: { type: DataTypes.INTEGER, defaultValue: 0 },
        labPack: DataTypes.JSON,
        licenceQuoteId: DataTypes.STRING,
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'order_lines' },
    );
  }
}
