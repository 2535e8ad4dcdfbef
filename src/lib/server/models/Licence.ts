import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

export interface LicenceTerms {
  tierName: string;
  use: 'editorial' | 'commercial';
  terms: string;
  media: string;
  cap: number | null;
  capUnit: string | null;
  territory: string;
  termMonths: number | null;
}

/** A licence as issued: its terms copied from the tier as they stood at purchase. */
export class Licence extends Model<InferAttributes<Licence>, InferCreationAttributes<Licence>> {
  declare id: string;
  declare orderLineId: number;
  declare workId: number;
  declare userId: string | null;
  declare licenseeName: string;
  declare licenseeOrganisation: string | null;
  declare intendedUse: string | null;
  declare terms: LicenceTerms;
  declare startsOn: string;
  declare endsOn: string | null;
  declare price: number;
  declare currency: string;
  declare status: CreationOptional<'active' | 'revoked'>;
  declare revokedAt: CreationOptional<Date | null>;
  declare revokedReason: CreationOptional<string | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    Licence.init(
      {
        id: { type: DataTypes.STRING, primaryKey: true },
        orderLineId: DataTypes.INTEGER,
        workId: DataTypes.INTEGER,
        userId: DataTypes.STRING,
        licenseeName: DataTypes.STRING,
        licenseeOrganisation: DataTypes.STRING,
        intendedUse: DataTypes.TEXT,
        terms: DataTypes.JSON,
        startsOn: DataTypes.STRING(10),
        endsOn: DataTypes.STRING(10),
        price: DataTypes.INTEGER,
        currency: DataTypes.STRING(3),
        status: { type: DataTypes.STRING, defaultValue: 'active' },
        revokedAt: DataTypes.DATE,
        revokedReason: DataTypes.STRING,
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'licences' },
    );
  }
}
