/** Read-only look into the bench's database, to check outcomes (paid, sold, licences) after the fact. */
import sqlite3 from 'sqlite3';

export class ReadDb {
  private readonly handle: sqlite3.Database;
  constructor(file: string) {
    this.handle = new sqlite3.Database(file, sqlite3.OPEN_READONLY);
    this.handle.configure('busyTimeout', 5_000);
  }

  all<T = Record<string, unknown>>(sql: string, params: unknown[] = []): Promise<T[]> {
    return new Promise((resolve, reject) => this.handle.all(sql, params, (error, rows) => (error ? reject(error) : resolve(rows as T[]))));
  }

  async one<T = Record<string, unknown>>(sql: string, params: unknown[] = []): Promise<T | undefined> {
    return (await this.all<T>(sql, params))[0];
  }

  close(): Promise<void> {
    return new Promise((resolve) => this.handle.close(() => resolve()));
  }
}
