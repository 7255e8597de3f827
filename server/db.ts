/** The Sequelize connection. One per process (tests create one per app instance and close it). */
import { Sequelize } from 'sequelize'
import pg from 'pg'

/** Parse BIGINT counts and NUMERIC as numbers: our counts stay far below 2^53. */
pg.types.setTypeParser(20, (v) => Number(v))
pg.types.setTypeParser(1700, (v) => Number(v))

export function createSequelize(databaseUrl: string): Sequelize {
  return new Sequelize(databaseUrl, {
    dialect: 'postgres',
    dialectModule: pg,
    logging: false,
    pool: { max: 10, min: 0, idle: 10_000, acquire: 10_000 },
    dialectOptions: { connectionTimeoutMillis: 3_000, statement_timeout: 30_000 },
  })
}
