import type { Logger } from 'pino';
import type { DataSource } from 'typeorm';
import type { Config } from './config/schema';

/** What every capability is given: the config, the database and the logger. */
export interface AppContext {
  config: Config;
  ds: DataSource;
  logger: Logger;
}
