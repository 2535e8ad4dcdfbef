import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

export class Paper extends Model<InferAttributes<Paper>, InferCreationAttributes<Paper>> {
  declare id: CreationOptional<number>;
  declare slug: string;
  declare name: string;
  declare description: string;
  declare surface: string;
  declare weightGsm: number;
  /** Surcharge over the size's base price, in basis points (2500 = +25 %). */
  declare surchargeBp: number;
  declare position: CreationOptional<number>;
  declare active: CreationOptional<boolean>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    Paper.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        slug: { type: DataTypes.STRING, unique: true },
        name: DataTypes.STRING,
        description: DataTypes.TEXT,
        surface: DataTypes.STRING,
        weightGsm: DataTypes.INTEGER,
        surchargeBp: DataTypes.INTEGER,
        position: { type: DataTypes.INTEGER, defaultValue: 0 },
        active: { type: DataTypes.BOOLEAN, defaultValue: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'papers' },
    );
  }
}
