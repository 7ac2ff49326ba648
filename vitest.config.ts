import { defineConfig } from 'vitest/config'
import { defineVitestProject } from '@nuxt/test-utils/config'

// Test layers (DEVELOPERS.md): unit (plain Node, fast), nuxt (components in a Nuxt environment),
// db (real PostgreSQL, no server), api (HTTP against the built server and the real database),
// browser (Debian's chromium through playwright-core against the built server).
export default defineConfig({
  test: {
    projects: [
      { test: { name: 'unit', environment: 'node', include: ['tests/unit/**/*.test.ts'] } },
      await defineVitestProject({
        test: { name: 'nuxt', environment: 'nuxt', include: ['tests/nuxt/**/*.test.ts'], testTimeout: 20_000 },
      }),
      {
        test: {
          name: 'db', environment: 'node', include: ['tests/db/**/*.test.ts'],
          testTimeout: 30_000, hookTimeout: 60_000,
        },
      },
      {
        test: {
          name: 'api', environment: 'node', include: ['tests/api/**/*.test.ts'],
          globalSetup: ['tests/helpers/server-setup.ts'], testTimeout: 30_000, hookTimeout: 60_000,
        },
      },
      {
        // restarts servers and the database: runs on its own, after the other layers (scripts/test.sh)
        test: {
          name: 'faults', environment: 'node', include: ['tests/faults/**/*.test.ts'],
          testTimeout: 300_000, hookTimeout: 120_000, fileParallelism: false,
        },
      },
      {
        test: {
          name: 'browser', environment: 'node', include: ['tests/browser/**/*.test.ts'],
          globalSetup: ['tests/helpers/server-setup.ts'], testTimeout: 60_000, hookTimeout: 60_000,
          // one chromium at a time on a 2-core machine
          fileParallelism: false,
        },
      },
    ],
  },
})
