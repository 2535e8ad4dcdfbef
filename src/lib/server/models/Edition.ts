import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import type { Work } from './Work';
import type { PrintSize } from './PrintSize';

/** The edition of one work at one size: open, or limited to `total` numbered prints plus artist's proofs. */
export class Edition extends Model<InferAttributes<Edition>, InferCreationAttributes<Edition>> {
  declare id: CreationOptional<number>;
  declare workId: ForeignKey<Work['id']>;
  declare printSizeId: ForeignKey<PrintSize['id']>;
  declare kind: 'open' | 'limited';
  declare total: number | null;
  declare artistProofs: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    Edition.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        kind: DataTypes.STRING,
        total: DataTypes.INTEGER,
        artistProofs: { type: DataTypes.INTEGER, defaultValue: 0 },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'editions' },
    );
  }
}
