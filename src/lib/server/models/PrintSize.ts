import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import type { LengthUnit } from '../../print-grade';

/** A paper size the lab prints, stored exactly in the unit it is sold in (portrait: width ≤ height). */
export class PrintSize extends Model<InferAttributes<PrintSize>, InferCreationAttributes<PrintSize>> {
  declare id: CreationOptional<number>;
  declare slug: string;
  declare label: string;
  declare family: 'iso-a' | 'inch';
  declare unit: LengthUnit;
  declare width: number;
  declare height: number;
  declare basePrice: number;
  declare position: CreationOptional<number>;
  declare active: CreationOptional<boolean>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    PrintSize.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        slug: { type: DataTypes.STRING, unique: true },
        label: DataTypes.STRING,
        family: DataTypes.STRING,
        unit: DataTypes.STRING,
        width: DataTypes.REAL,
        height: DataTypes.REAL,
        basePrice: DataTypes.INTEGER,
        position: { type: DataTypes.INTEGER, defaultValue: 0 },
        active: { type: DataTypes.BOOLEAN, defaultValue: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'print_sizes' },
    );
  }
}
