import Database from 'better-sqlite3';
import { drizzle, type BetterSQLite3Database } from 'drizzle-orm/better-sqlite3';
import { migrate } from 'drizzle-orm/better-sqlite3/migrator';
import { mkdirSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import * as schema from './schema';

export type Db = BetterSQLite3Database<typeof schema>;

export function databasePath(): string {
	return resolve(process.env.DATABASE_URL?.replace(/^file:/, '') || 'data/lockstep.db');
}

export function openDatabase(path = databasePath()): { db: Db; sqlite: Database.Database } {
	mkdirSync(dirname(path), { recursive: true });
	const sqlite = new Database(path);
	sqlite.pragma('journal_mode = WAL');
	sqlite.pragma('foreign_keys = ON');
	sqlite.pragma('busy_timeout = 5000');
	return { db: drizzle(sqlite, { schema }), sqlite };
}

export function migrationsFolder(): string {
	return resolve(process.env.MIGRATIONS_DIR ?? 'drizzle');
}

export function applyMigrations(db: Db): void {
	migrate(db, { migrationsFolder: migrationsFolder() });
}

const opened = openDatabase();
/** The one database client of the server process. */
export const db: Db = opened.db;
export const sqlite = opened.sqlite;
