import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** One change to money, rights or roles: who, what, when, and the values before and after. Append-only. */
export class AuditEvent extends Model<InferAttributes<AuditEvent>, InferCreationAttributes<AuditEvent>> {
  declare id: CreationOptional<number>;
  declare actorId: string | null;
  declare actorEmail: string | null;
  declare action: string;
  declare subjectType: string;
  declare subjectId: string;
  declare orderId: number | null;
  declare userId: string | null;
  declare before: Record<string, unknown> | null;
  declare after: Record<string, unknown> | null;
  declare createdAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    AuditEvent.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        actorId: DataTypes.STRING,
        actorEmail: DataTypes.STRING,
        action: DataTypes.STRING,
        subjectType: DataTypes.STRING,
        subjectId: DataTypes.STRING,
        orderId: DataTypes.INTEGER,
        userId: DataTypes.STRING,
        before: DataTypes.JSON,
        after: DataTypes.JSON,
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'audit_events', updatedAt: false },
    );
  }
}
