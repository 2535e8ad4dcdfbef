import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from 'sequelize';
import type { LicenceTerms } from './Licence';
import type { Work } from './Work';

/** What a buyer asks for when the shop's tiers do not fit their use. */
export interface QuoteRequest {
  use: 'editorial' | 'commercial';
  media: string;
  printRun: number | null;
  territory: string;
  termMonths: number | null;
  exclusivity: 'none' | 'category' | 'full';
  message: string;
}

/** What the photographer offers in reply: ordinary licence terms plus exclusivity. */
export interface QuotedTerms extends LicenceTerms {
  exclusivity: 'none' | 'category' | 'full';
}

export type QuoteStatus = 'requested' | 'quoted' | 'declined' | 'paid' | 'withdrawn';

/** A custom licence enquiry and its answer. A quoted price is good until `expiresAt`, for its owner only. */
export class LicenceQuote extends Model<InferAttributes<LicenceQuote>, InferCreationAttributes<LicenceQuote>> {
  declare id: string;
  declare workId: number;
  declare userId: string;
  declare email: string;
  declare licenseeName: string;
  declare licenseeOrganisation: string | null;
  declare request: QuoteRequest;
  declare status: CreationOptional<QuoteStatus>;
  declare terms: CreationOptional<QuotedTerms | null>;
  declare price: CreationOptional<number | null>;
  declare currency: CreationOptional<string | null>;
  declare reply: CreationOptional<string | null>;
  declare answeredBy: CreationOptional<string | null>;
  declare answeredAt: CreationOptional<Date | null>;
  declare expiresAt: CreationOptional<Date | null>;
  declare orderId: CreationOptional<number | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  declare work?: NonAttribute<Work>;

  static initModel(sequelize: Sequelize): void {
    LicenceQuote.init(
      {
        id: { type: DataTypes.STRING, primaryKey: true },
        workId: DataTypes.INTEGER,
        userId: DataTypes.STRING,
        email: DataTypes.STRING,
        licenseeName: DataTypes.STRING,
        licenseeOrganisation: DataTypes.STRING,
        request: DataTypes.JSON,
        status: { type: DataTypes.STRING, defaultValue: 'requested' },
        terms: DataTypes.JSON,
        price: DataTypes.INTEGER,
        currency: DataTypes.STRING(3),
        reply: DataTypes.TEXT,
        answeredBy: DataTypes.STRING,
        answeredAt: DataTypes.DATE,
        expiresAt: DataTypes.DATE,
        orderId: DataTypes.INTEGER,
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'licence_quotes' },
    );
  }
}
