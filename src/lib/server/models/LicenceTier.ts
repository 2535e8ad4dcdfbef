import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

export type LicenceUse = 'editorial' | 'commercial';

/** One of the shop's licence offers, with its terms in plain words. */
export class LicenceTier extends Model<InferAttributes<LicenceTier>, InferCreationAttributes<LicenceTier>> {
  declare id: CreationOptional<number>;
  declare slug: string;
  declare name: string;
  declare use: LicenceUse;
  declare summary: string;
  declare terms: string;
  declare media: string;
  /** Audience or print-run cap; null means no cap. */
  declare cap: number | null;
  declare capUnit: string | null;
  declare territory: string;
  declare termMonths: number | null;
  declare defaultPrice: number;
  declare position: CreationOptional<number>;
  declare active: CreationOptional<boolean>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    LicenceTier.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        slug: { type: DataTypes.STRING, unique: true },
        name: DataTypes.STRING,
        use: DataTypes.STRING,
        summary: DataTypes.STRING,
        terms: DataTypes.TEXT,
        media: DataTypes.STRING,
        cap: DataTypes.INTEGER,
        capUnit: DataTypes.STRING,
        territory: DataTypes.STRING,
        termMonths: DataTypes.INTEGER,
        defaultPrice: DataTypes.INTEGER,
        position: { type: DataTypes.INTEGER, defaultValue: 0 },
        active: { type: DataTypes.BOOLEAN, defaultValue: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'licence_tiers' },
    );
  }
}
