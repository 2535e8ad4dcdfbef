import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** The right to download a licensed file: until `expiresAt`, at most `maxDownloads` times. */
export class DownloadGrant extends Model<InferAttributes<DownloadGrant>, InferCreationAttributes<DownloadGrant>> {
  declare id: CreationOptional<number>;
  declare licenceId: string;
  declare expiresAt: Date;
  declare maxDownloads: number;
  declare downloads: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    DownloadGrant.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        licenceId: DataTypes.STRING,
        expiresAt: DataTypes.DATE,
        maxDownloads: DataTypes.INTEGER,
        downloads: { type: DataTypes.INTEGER, defaultValue: 0 },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'download_grants' },
    );
  }
}
