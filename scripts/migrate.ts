import { applyMigrations, databasePath, openDatabase } from '../src/lib/server/db/index';

const { db, sqlite } = openDatabase();
applyMigrations(db);
sqlite.close();
console.log(`Database migrated: ${databasePath()}`);
