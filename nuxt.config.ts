import { createRequire } from 'node:module'
import { dirname, join } from 'node:path'
import { build as esbuild } from 'esbuild'

// Ratchet: the repository root is Nuxt's source folder (pages/, components/, server/ … at the top).
export default defineNuxtConfig({
  modules: ['@pinia/nuxt', '@nuxtjs/tailwindcss', 'nuxt-auth-utils', '@vueuse/nuxt', '@nuxt/eslint'],
  devtools: { enabled: false },
  app: {
    head: {
      htmlAttrs: { lang: 'en' },
      title: 'Ratchet',
      meta: [
        { name: 'viewport', content: 'width=device-width, initial-scale=1' },
        { name: 'description', content: 'Targets, readings and fixes for teams that build hardware in iterations.' },
      ],
      link: [{ rel: 'icon', type: 'image/svg+xml', href: '/favicon.svg' }],
    },
  },
  runtimeConfig: {
    // Overridden at run time by NUXT_DATABASE_URL (or DATABASE_URL, read in server/utils/db.ts).
    databaseUrl: '',
    appUrl: 'http://127.0.0.1:3000',
    smtp: {
      host: '127.0.0.1',
      port: 1025,
      secure: false,
      user: '',
      pass: '',
      from: 'Ratchet <ratchet@localhost>',
    },
    auth: {
      // Trust X-Forwarded-For for the client address (only behind a proxy you run).
      trustProxy: false,
      failuresPerAddress: 5,
      failuresPerIp: 100,
      // "forgot password" requests (e-mails) per address, and per IP, in the same window
      resetsPerAddress: 3,
      resetsPerIp: 10,
      windowMinutes: 15,
    },
    session: {
      maxAge: 60 * 60 * 24 * 14,
      cookie: { secure: true, sameSite: 'lax' },
    },
    // Evidence files (server/utils/files/storage.ts): NUXT_FILES_DRIVER (fs | s3), NUXT_FILES_DIR,
    // NUXT_FILES_MAX_BYTES, NUXT_FILES_TEAM_QUOTA_BYTES (0: none), NUXT_FILES_S3_ENDPOINT … .
    files: {
      driver: 'fs',
      dir: '.data/files',
      maxBytes: 200_000_000,
      teamQuotaBytes: 10_000_000_000,
      s3: { endpoint: '', bucket: '', region: 'us-east-1', accessKeyId: '', secretAccessKey: '' },
    },
  },
  dir: { app: 'app' },
  srcDir: '.',
  compatibilityDate: '2026-11-01',
  nitro: {
    experimental: { tasks: false },
    // the API reference page's script and style, served by server/api/v1/docs/[file].get.ts
    serverAssets: [{
      baseName: 'swagger-ui',
      dir: dirname(createRequire(import.meta.url).resolve('swagger-ui-dist/package.json')),
      pattern: '{swagger-ui-bundle.js,swagger-ui.css}',
    }],
    // read as files into the bundle, not left as a package to import at run time
    externals: { inline: ['swagger-ui-dist'] },
    hooks: {
      // the CSV worker thread's script (server/workers/csv.ts), a file of its own beside the
      // server bundle (.output/server/workers/csv.mjs) with everything it imports inlined
      async compiled(nitro) {
        if (nitro.options.dev) return
        await esbuild({
          entryPoints: [join(nitro.options.rootDir, 'server/workers/csv.ts')],
          outfile: join(nitro.options.output.serverDir, 'workers/csv.mjs'),
          bundle: true,
          platform: 'node',
          target: 'node20',
          format: 'esm',
          logLevel: 'warning',
        })
      },
    },
  },
  vite: {
    plugins: [{
      // vuedraggable's bundle finds the global object with `new Function("return this")`; under the
      // pages' Content-Security-Policy (no eval) that is refused and reported. globalThis is it.
      name: 'ratchet:no-eval-global',
      enforce: 'pre',
      transform(code: string, id: string) {
        if (!id.includes('/node_modules/vuedraggable/')) return null
        return { code: code.replace(/\b(?:new\s+)?Function\(\s*["']return this["']\s*\)\(\)/g, 'globalThis'), map: null }
      },
    }],
    build: {
      // fonts stay files served by the app (the Content-Security-Policy allows fonts from 'self',
      // not data: URLs); other small assets may still be inlined
      assetsInlineLimit: (file: string) => (/\.(woff2?|ttf|otf)$/i.test(file) ? false : undefined),
    },
  },
  typescript: {
    strict: true,
  },
  telemetry: false,
  eslint: {
    config: { stylistic: true },
  },
  tailwindcss: {
    cssPath: '~/assets/css/main.css',
    configPath: '~~/tailwind.config.ts',
    exposeConfig: false,
    viewer: false,
  },
})
