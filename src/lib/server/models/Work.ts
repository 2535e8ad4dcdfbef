import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from 'sequelize';
import type { Series } from './Series';
import type { PrintOffer } from './PrintOffer';
import type { WorkLicencePrice } from './WorkLicencePrice';
import type { Edition } from './Edition';
import type { CaptureData, Orientation } from '../../catalogue-types';

export type { CaptureData, Orientation };

export type WorkStatus = 'draft' | 'published';

export type DerivativeFormat = 'avif' | 'webp' | 'jpeg';
export type VariantName = 'sm' | 'md' | 'lg' | 'xl';

/** Public derivative files, in a folder named from the content hash so they can be cached for ever. */
export interface DerivativeSet {
  /** Folder under uploads/derivatives. */
  key: string;
  formats: DerivativeFormat[];
  /** Exact pixel size of each variant, smallest first. */
  variants: { name: VariantName; width: number; height: number }[];
}

export class Work extends Model<InferAttributes<Work>, InferCreationAttributes<Work>> {
  declare id: CreationOptional<number>;
  declare slug: string;
  declare title: string;
  declare caption: string;
  declare altText: string;
  declare keywords: string[];
  declare notes: CreationOptional<string>;
  declare seriesId: ForeignKey<Series['id']> | null;
  declare width: number;
  declare height: number;
  declare orientation: Orientation;
  declare focalX: CreationOptional<number>;
  declare focalY: CreationOptional<number>;
  declare capture: CaptureData;
  declare status: WorkStatus;
  declare publishedAt: Date | null;
  declare propertyRelease: CreationOptional<string>;
  declare originalKey: string;
  declare originalSha256: string;
  declare colourProfile: string | null;
  declare derivatives: DerivativeSet;
  declare placeholder: string;
  declare dominantColor: string;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  declare series?: NonAttribute<Series | null>;
  declare offers?: NonAttribute<PrintOffer[]>;
  declare licencePrices?: NonAttribute<WorkLicencePrice[]>;
  declare editions?: NonAttribute<Edition[]>;

  static initModel(sequelize: Sequelize): void {
    Work.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        slug: { type: DataTypes.STRING, unique: true },
        title: DataTypes.STRING,
        caption: DataTypes.TEXT,
        altText: DataTypes.TEXT,
        keywords: { type: DataTypes.JSON, defaultValue: [] },
        notes: { type: DataTypes.TEXT, defaultValue: '' },
        width: DataTypes.INTEGER,
        height: DataTypes.INTEGER,
        orientation: DataTypes.STRING,
        focalX: { type: DataTypes.REAL, defaultValue: 0.5 },
        focalY: { type: DataTypes.REAL, defaultValue: 0.5 },
        capture: { type: DataTypes.JSON, defaultValue: {} },
        status: DataTypes.STRING,
        publishedAt: DataTypes.DATE,
        propertyRelease: { type: DataTypes.STRING, defaultValue: 'PR-NAP' },
        originalKey: DataTypes.STRING,
        originalSha256: DataTypes.STRING,
        colourProfile: DataTypes.STRING,
        derivatives: DataTypes.JSON,
        placeholder: DataTypes.TEXT,
        dominantColor: DataTypes.STRING,
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'works' },
    );
  }
}

export function orientationOf(width: number, height: number): Orientation {
  if (width === height) return 'square';
  return width > height ? 'landscape' : 'portrait';
}
