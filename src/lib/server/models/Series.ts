import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from 'sequelize';
import type { Work } from './Work';

export class Series extends Model<InferAttributes<Series>, InferCreationAttributes<Series>> {
  declare id: CreationOptional<number>;
  declare slug: string;
  declare title: string;
  declare description: string;
  declare position: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare works?: NonAttribute<Work[]>;

  static initModel(sequelize: Sequelize): void {
    Series.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        slug: { type: DataTypes.STRING, unique: true },
        title: DataTypes.STRING,
        description: DataTypes.TEXT,
        position: { type: DataTypes.INTEGER, defaultValue: 0 },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'series' },
    );
  }
}
