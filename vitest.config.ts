import { fileURLToPath, URL } from 'node:url'
import { defineConfig } from 'vitest/config'
import vue from '@vitejs/plugin-vue'

/**
 * Three projects:
 * - `shared`: the analysis core and other pure code, no services;
 * - `server`: API and script tests against the real PostgreSQL, s3rver and SMTP sink (tests/server/globalSetup.ts);
 * - `client`: Vue component tests in happy-dom.
 */
const alias = {
  '@': fileURLToPath(new URL('./src', import.meta.url)),
  '@shared': fileURLToPath(new URL('./shared', import.meta.url)),
  '@server': fileURLToPath(new URL('./server', import.meta.url)),
}

export default defineConfig({
  resolve: { alias },
  test: {
    projects: [
      {
        resolve: { alias },
        test: { name: 'shared', environment: 'node', include: ['tests/shared/**/*.test.ts', 'tests/scripts/**/*.test.ts'], testTimeout: 30_000 },
      },
      {
        resolve: { alias },
        test: {
          name: 'server',
          environment: 'node',
          include: ['tests/server/**/*.test.ts', 'tests/e2e/**/*.test.ts'],
          globalSetup: ['tests/server/globalSetup.ts'],
          testTimeout: 60_000,
          hookTimeout: 120_000,
          fileParallelism: false,
        },
      },
      {
        plugins: [vue()],
        resolve: { alias },
        test: {
          name: 'client',
          environment: 'happy-dom',
          include: ['tests/src/**/*.test.ts'],
          setupFiles: ['tests/src/setup.ts'],
          server: { deps: { inline: ['element-plus'] } },
        },
      },
    ],
  },
})
