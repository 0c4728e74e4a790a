import { Sequelize } from 'sequelize';
import { initModels } from './models';

/** A Sequelize connected to `url` with our models bound. Models are bound once per process (module state). */
export function createSequelize(url: string, options: { poolMax?: number } = {}): Sequelize {
  const sequelize = new Sequelize(url, {
    dialect: 'postgres',
    logging: false,
    pool: { max: options.poolMax ?? 10, min: 0, idle: 10_000, acquire: 10_000 },
    dialectOptions: { connectionTimeoutMillis: 5_000 },
  });
  initModels(sequelize);
  return sequelize;
}
