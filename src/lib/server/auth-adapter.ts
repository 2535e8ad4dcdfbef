/**
 * A better-auth database adapter over our Sequelize (SQLite) connection, so accounts live in the
 * shop's one database. better-auth speaks camelCase fields; our tables are snake_case.
 */
import { QueryTypes, type Sequelize } from 'sequelize';
import { createAdapterFactory, type CleanedWhere } from 'better-auth/adapters';

const IDENTIFIER = /^[A-Za-z_][A-Za-z0-9_]*$/;

function column(field: string): string {
  if (!IDENTIFIER.test(field)) throw new Error(`unsafe column name: ${field}`);
  return `"${field.replace(/[A-Z]/g, (c) => `_${c.toLowerCase()}`)}"`;
}
function table(model: string): string {
  if (!IDENTIFIER.test(model)) throw new Error(`unsafe table name: ${model}`);
  return `"${model}"`;
}
function camel(key: string): string {
  return key.replace(/_([a-z])/g, (_, c: string) => c.toUpperCase());
}
function fromRow<T>(row: Record<string, unknown> | undefined): T | null {
  if (!row) return null;
  return Object.fromEntries(Object.entries(row).map(([k, v]) => [camel(k), v])) as T;
}
function escapeLike(value: string): string {
  return value.replace(/[\\%_]/g, (c) => `\\${c}`);
}

type Bind = unknown[];

/** Adds a bound parameter and returns its placeholder ($1, $2, …). */
function param(bind: Bind, value: unknown): string {
  return `$${bind.push(value)}`;
}

/** One condition; values are always bound parameters, never spliced into the SQL. */
function condition(w: CleanedWhere, bind: Bind): string {
  const insensitive = w.mode === 'insensitive' && typeof w.value === 'string';
  const col = insensitive ? `LOWER(${column(w.field)})` : column(w.field);
  const val = (v: unknown) => param(bind, insensitive && typeof v === 'string' ? v.toLowerCase() : v);
  switch (w.operator) {
    case 'eq':
      return w.value === null ? `${column(w.field)} IS NULL` : `${col} = ${val(w.value)}`;
    case 'ne':
      return w.value === null ? `${column(w.field)} IS NOT NULL` : `(${col} <> ${val(w.value)} OR ${column(w.field)} IS NULL)`;
    case 'lt': return `${col} < ${val(w.value)}`;
    case 'lte': return `${col} <= ${val(w.value)}`;
    case 'gt': return `${col} > ${val(w.value)}`;
    case 'gte': return `${col} >= ${val(w.value)}`;
    case 'in':
    case 'not_in': {
      const list = Array.isArray(w.value) ? w.value : [w.value];
      if (list.length === 0) return w.operator === 'in' ? '0' : '1';
      return `${col} ${w.operator === 'in' ? 'IN' : 'NOT IN'} (${list.map((v) => val(v)).join(', ')})`;
    }
    case 'contains': return `${col} LIKE ${val(`%${escapeLike(String(w.value))}%`)} ESCAPE '\\'`;
    case 'starts_with': return `${col} LIKE ${val(`${escapeLike(String(w.value))}%`)} ESCAPE '\\'`;
    case 'ends_with': return `${col} LIKE ${val(`%${escapeLike(String(w.value))}`)} ESCAPE '\\'`;
    default:
      throw new Error(`unsupported operator ${String(w.operator)}`);
  }
}

/** better-auth's rule: every AND condition holds, and at least one OR condition (when there are any). */
function whereClause(where: CleanedWhere[] | undefined, bind: Bind): string {
  if (!where?.length) return '';
  const and = where.filter((w) => w.connector !== 'OR').map((w) => condition(w, bind));
  const or = where.filter((w) => w.connector === 'OR').map((w) => condition(w, bind));
  const parts = [...and, ...(or.length ? [`(${or.join(' OR ')})`] : [])];
  return ` WHERE ${parts.join(' AND ')}`;
}

export function sequelizeAdapter(sequelize: Sequelize) {
  const select = (sql: string, bind: Bind) =>
    sequelize.query<Record<string, unknown>>(sql, { bind, type: QueryTypes.SELECT });
  /** Runs an INSERT, UPDATE or DELETE and returns how many rows it changed. */
  const run = async (sql: string, bind: Bind): Promise<number> => {
    const verb = sql.trimStart().slice(0, 6).toUpperCase();
    if (verb === 'INSERT') {
      const [, changes] = (await sequelize.query(sql, { bind, type: QueryTypes.INSERT })) as [unknown, number];
      return changes;
    }
    const type = verb === 'DELETE' ? QueryTypes.BULKDELETE : QueryTypes.BULKUPDATE;
    return (await sequelize.query(sql, { bind, type })) as unknown as number;
  };
  const rowids = async (model: string, where: CleanedWhere[], limit?: number) => {
    const bind: Bind = [];
    const rows = await select(`SELECT rowid AS r FROM ${table(model)}${whereClause(where, bind)}${limit ? ` LIMIT ${limit}` : ''}`, bind);
    return rows.map((row) => row.r as number);
  };

  return createAdapterFactory({
    config: {
      adapterId: 'stillmark-sequelize',
      adapterName: 'Sequelize (SQLite)',
      supportsJSON: false,
      supportsDates: false,
      supportsBooleans: false,
      supportsNumericIds: false,
      transaction: false,
    },
    adapter: () => ({
      async create({ model, data }) {
        const keys = Object.keys(data);
        const bind: Bind = [];
        const values = keys.map((k) => param(bind, (data as Record<string, unknown>)[k]));
        await run(`INSERT INTO ${table(model)} (${keys.map(column).join(', ')}) VALUES (${values.join(', ')})`, bind);
        const [row] = await select(`SELECT * FROM ${table(model)} WHERE "id" = $1`, [(data as Record<string, unknown>).id]);
        return fromRow(row) as typeof data;
      },
      async findOne({ model, where }) {
        const bind: Bind = [];
        const [row] = await select(`SELECT * FROM ${table(model)}${whereClause(where, bind)} LIMIT 1`, bind);
        return fromRow(row);
      },
      async findMany({ model, where, limit, offset, sortBy }) {
        const bind: Bind = [];
        let sql = `SELECT * FROM ${table(model)}${whereClause(where, bind)}`;
        if (sortBy) sql += ` ORDER BY ${column(sortBy.field)} ${sortBy.direction === 'desc' ? 'DESC' : 'ASC'}`;
        sql += ` LIMIT ${Number.isInteger(limit) && limit > 0 ? limit : -1}`;
        if (offset) sql += ` OFFSET ${Math.max(0, Math.trunc(offset))}`;
        return (await select(sql, bind)).map((row) => fromRow(row)!);
      },
      async count({ model, where }) {
        const bind: Bind = [];
        const [row] = await select(`SELECT COUNT(*) AS n FROM ${table(model)}${whereClause(where, bind)}`, bind);
        return Number(row?.n ?? 0);
      },
      async update({ model, where, update }) {
        // Find the row first: the update may change the very fields the condition names.
        const [target] = await rowids(model, where, 1);
        if (target === undefined) return null;
        const entries = Object.entries(update as Record<string, unknown>);
        if (entries.length) {
          const bind: Bind = [];
          const sets = entries.map(([k, v]) => `${column(k)} = ${param(bind, v)}`).join(', ');
          await run(`UPDATE ${table(model)} SET ${sets} WHERE rowid = ${param(bind, target)}`, bind);
        }
        const [row] = await select(`SELECT * FROM ${table(model)} WHERE rowid = $1`, [target]);
        return fromRow(row);
      },
      async updateMany({ model, where, update }) {
        const entries = Object.entries(update);
        if (!entries.length) return 0;
        const bind: Bind = [];
        const sets = entries.map(([k, v]) => `${column(k)} = ${param(bind, v)}`).join(', ');
        return run(`UPDATE ${table(model)} SET ${sets}${whereClause(where, bind)}`, bind);
      },
      async delete({ model, where }) {
        const [target] = await rowids(model, where, 1);
        if (target !== undefined) await run(`DELETE FROM ${table(model)} WHERE rowid = $1`, [target]);
      },
      // One statement each (SQLite 3.35+ RETURNING): a rate-limit counter or a one-time token cannot be
      // taken twice by two requests racing each other.
      async incrementOne({ model, where, increment, set }) {
        const bind: Bind = [];
        const sets = [
          ...Object.entries(increment).map(([k, d]) => `${column(k)} = ${column(k)} + ${param(bind, d)}`),
          ...Object.entries(set ?? {}).map(([k, v]) => `${column(k)} = ${param(bind, v)}`),
        ];
        const [row] = await select(
          `UPDATE ${table(model)} SET ${sets.join(', ')} WHERE rowid = (SELECT rowid FROM ${table(model)}${whereClause(where, bind)} LIMIT 1) RETURNING *`,
          bind,
        );
        return fromRow(row);
      },
      async consumeOne({ model, where }) {
        const bind: Bind = [];
        const [row] = await select(
          `DELETE FROM ${table(model)} WHERE rowid = (SELECT rowid FROM ${table(model)}${whereClause(where, bind)} LIMIT 1) RETURNING *`,
          bind,
        );
        return fromRow(row);
      },
      async deleteMany({ model, where }) {
        const bind: Bind = [];
        return run(`DELETE FROM ${table(model)}${whereClause(where, bind)}`, bind);
      },
    }),
  });
}
