/** `npm run db:migrate` — applies pending migrations to DATABASE_URL (or `-- --revert` the last one). */
import { loadConfig } from '../config/load';
import { createDataSource, migrate } from './data-source';

const config = loadConfig(process.env, { auth: { jwtSecret: 'x'.repeat(32) } });
const ds = await createDataSource(config.database.url).initialize();
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
