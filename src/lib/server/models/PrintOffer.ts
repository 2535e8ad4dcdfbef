import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from 'sequelize';
import type { Work } from './Work';
import type { PrintSize } from './PrintSize';
import type { Paper } from './Paper';
import type { Edition } from './Edition';

/** A print the work is offered as: one size on one paper, belonging to that size's edition. */
export class PrintOffer extends Model<InferAttributes<PrintOffer>, InferCreationAttributes<PrintOffer>> {
  declare id: CreationOptional<number>;
  declare workId: ForeignKey<Work['id']>;
  declare printSizeId: ForeignKey<PrintSize['id']>;
  declare paperId: ForeignKey<Paper['id']>;
  declare editionId: ForeignKey<Edition['id']>;
  declare priceOverride: number | null;
  declare active: CreationOptional<boolean>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  declare size?: NonAttribute<PrintSize>;
  declare paper?: NonAttribute<Paper>;
  declare edition?: NonAttribute<Edition>;

  static initModel(sequelize: Sequelize): void {
    PrintOffer.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        priceOverride: DataTypes.INTEGER,
        active: { type: DataTypes.BOOLEAN, defaultValue: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'print_offers' },
    );
  }
}
