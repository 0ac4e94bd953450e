import { DataSource } from 'typeorm';
import { entities } from '@evenhand/entities/orm';
import { migrations } from './migrations/index.js';

export function createDataSource(url: string): DataSource {
  return new DataSource({
    type: 'postgres',
    url,
    entities,
    migrations,
    migrationsTableName: 'migrations',
    // The schema is only ever changed by migrations.
    synchronize: false,
    migrationsRun: false,
    logging: ['error'],
    extra: { max: 10, connectionTimeoutMillis: 5000 },
  });
}
