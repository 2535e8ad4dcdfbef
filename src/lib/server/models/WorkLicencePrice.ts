import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import type { Work } from './Work';
import type { LicenceTier } from './LicenceTier';

/** A work's own price for a licence tier, or the tier withdrawn for that work. */
export class WorkLicencePrice extends Model<InferAttributes<WorkLicencePrice>, InferCreationAttributes<WorkLicencePrice>> {
  declare id: CreationOptional<number>;
  declare workId: ForeignKey<Work['id']>;
  declare licenceTierId: ForeignKey<LicenceTier['id']>;
  declare mode: 'override' | 'withdrawn';
  declare price: number | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    WorkLicencePrice.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        mode: DataTypes.STRING,
        price: DataTypes.INTEGER,
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'work_licence_prices' },
    );
  }
}
