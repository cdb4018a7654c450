import { fileURLToPath } from 'node:url'
import { defineVitestProject } from '@nuxt/test-utils/config'
import { defineConfig } from 'vitest/config'

// the repository's shared/ code is imported as #shared/…, as in the app (and package.json's imports for scripts)
const shared = fileURLToPath(new URL('./shared', import.meta.url))

// Setting up the `nuxt` project loads Nuxt (seconds): skip it when the run asks only for others.
const asked = process.argv.flatMap((a, i, all) => (a === '--project' ? [all[i + 1] ?? ''] : a.startsWith('--project=') ? [a.slice(10)] : []))
const wantsNuxt = !asked.length || asked.some(name => name === 'nuxt' || name.includes('*'))
const nuxtProject = wantsNuxt
  ? [await defineVitestProject({
      test: {
        name: 'nuxt',
        include: ['tests/nuxt/**/*.test.ts'],
        environment: 'nuxt',
        environmentOptions: { nuxt: { domEnvironment: 'happy-dom' } },
        // the first file of a run sets up the Nuxt app (a few seconds on a busy machine)
        hookTimeout: 60_000,
        testTimeout: 30_000,
        sequence: { groupOrder: 0 },
      },
    })]
  : []

// Four projects: pure modules (no services), components mounted in a Nuxt app in happy-dom (no
// services either), the HTTP API against the built server, and the browser suite driving
// Chromium. scripts/test.sh starts the services first.
export default defineConfig({
  test: {
    projects: [
      {
        resolve: { alias: { '#shared': shared } },
        test: {
          name: 'unit',
          include: ['tests/unit/**/*.test.ts'],
          environment: 'node',
          sequence: { groupOrder: 0 },
        },
      },
      ...nuxtProject,
      {
        resolve: { alias: { '#shared': shared } },
        test: {
          name: 'api',
          include: ['tests/api/**/*.test.ts'],
          environment: 'node',
          sequence: { groupOrder: 1 },
          testTimeout: 60_000,
          hookTimeout: 120_000,
          fileParallelism: false,
        },
      },
      {
        resolve: { alias: { '#shared': shared } },
        test: {
          name: 'browser',
          include: ['tests/browser/**/*.test.ts'],
          environment: 'node',
          sequence: { groupOrder: 2 },
          testTimeout: 120_000,
          hookTimeout: 120_000,
          fileParallelism: false,
        },
      },
    ],
  },
})
