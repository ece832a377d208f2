/**
 * `npm run db:migrate` — applies pending migrations (or `-- --revert` the last one) as the
 * migration user DATABASE_MIGRATION_URL, or DATABASE_URL when that is not set.
 */
import { loadConfig } from '../config/load';
import { createDataSource, migrate } from './data-source';

const config = loadConfig(process.env, { auth: { jwtSecret: 'x'.repeat(32) } });
const ds = await createDataSource(config.database.migrationUrl ?? config.database.url, 1).initialize();
try {
  if (process.argv.includes('--revert')) {
    await ds.undoLastMigration({ transaction: 'each' });
    console.log('reverted the last migration');
  } else {
    const applied = await migrate(ds);
    console.log(applied.length ? `applied: ${applied.join(', ')}` : 'database is up to date');
  }
} finally {
  await ds.destroy();
}
