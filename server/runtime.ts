/** Wires the app's dependencies from a configuration: database + models, object store, mailer, analysis threads. */
import type { Sequelize } from 'sequelize'
import { createSequelize } from './db'
import { defineModels } from './models'
import { createObjectStore } from './storage/objectStore'
import { createMailer } from './mail/mailer'
import type { AppConfig } from './config'
import type { AppDeps } from './app'
import { createPoolMeasurer } from './analysis/poolMeasurer'
import { createLazyAnalysisPool } from './analysis/lazyAnalysisPool'
import { createJobQueue } from './jobs/jobQueue'

/**
 * @param options.sequelize reuse an existing connection (tests run several app instances against one); it is then
 * left open by `dispose`.
 */
export function createDeps(config: AppConfig, options: { sequelize?: Sequelize } = {}): AppDeps & { dispose(): Promise<void> } {
  const sequelize = options.sequelize ?? createSequelize(config.databaseUrl)
  defineModels(sequelize)
  const store = createObjectStore(config.s3)
  const mailer = createMailer(config.smtpUrl, config.mailFrom)
  const analysisPool = createLazyAnalysisPool(config.analysisThreads)
  const measurer = createPoolMeasurer(analysisPool)
  const jobs = createJobQueue(config.databaseUrl)
  return {
    config,
    sequelize,
    store,
    mailer,
    measurer,
    analysisPool,
    jobs,
    async dispose() {
      await jobs.close()
      store.close()
      mailer.close()
      await analysisPool.close()
      if (!options.sequelize) await sequelize.close()
    },
  }
}
