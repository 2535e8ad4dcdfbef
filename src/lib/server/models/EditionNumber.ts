import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** One number n of an edition's N, reserved during checkout or sold. Unique per edition. */
export class EditionNumber extends Model<InferAttributes<EditionNumber>, InferCreationAttributes<EditionNumber>> {
  declare id: CreationOptional<number>;
  declare editionId: number;
  declare number: number;
  declare orderLineId: number;
  declare state: 'reserved' | 'sold';
  declare reservedUntil: Date | null;
  declare certificateSerial: string | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    EditionNumber.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        editionId: DataTypes.INTEGER,
        number: DataTypes.INTEGER,
        orderLineId: DataTypes.INTEGER,
        state: DataTypes.STRING,
        reservedUntil: DataTypes.DATE,
        certificateSerial: DataTypes.STRING,
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'edition_numbers' },
    );
  }
}
