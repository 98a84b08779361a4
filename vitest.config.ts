import { fileURLToPath } from 'node:url'
import { defineConfig } from 'vitest/config'
import { defineVitestProject } from '@nuxt/test-utils/config'

// Four projects, one command (npm test): pure functions, Nuxt components,
// the built server over HTTP, and real Chromium against the built server.
export default defineConfig({
  test: {
    projects: [
      {
        // The same aliases Nuxt gives app code, so app/utils modules can be tested as plain modules.
        resolve: { alias: { '#shared': fileURLToPath(new URL('./shared', import.meta.url)), '~': fileURLToPath(new URL('./app', import.meta.url)) } },
        test: { name: 'unit', include: ['tests/unit/**/*.test.ts'], environment: 'node' },
      },
      await defineVitestProject({
        // Starting the Nuxt environment (setupNuxt in a beforeAll) took over vitest's default 10 s once
        // while browser suites shared the two CPUs; a minute leaves room without hiding a hang.
        test: { name: 'nuxt', include: ['tests/nuxt/**/*.test.ts'], environment: 'nuxt', setupFiles: ['tests/support/nuxt-setup.ts'], hookTimeout: 60_000 },
      }),
      {
        test: {
          name: 'e2e',
          include: ['tests/e2e/**/*.test.ts'],
          environment: 'node',
          globalSetup: ['tests/support/build-once.ts'],
          testTimeout: 60_000,
          hookTimeout: 120_000,
        },
      },
      {
        test: {
          name: 'browser',
          include: ['tests/browser/**/*.test.ts'],
          environment: 'node',
          globalSetup: ['tests/support/build-once.ts'],
          testTimeout: 120_000,
          hookTimeout: 120_000,
          // One Chromium at a time: the machine has two cores.
          fileParallelism: false,
        },
      },
    ],
  },
})
