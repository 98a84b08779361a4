import { cpSync, readFileSync } from 'node:fs'
import { createRequire } from 'node:module'
import { resolve } from 'node:path'
import type { PluginOption } from 'vite'
import { ensureDevSessionPassword } from './scripts/session-secret.mjs'
import { PASSWORD_SCRYPT_SETTINGS } from './server/utils/password-settings'
import { APP_SHELL_PATH, withAppShellEntry, type PrecacheEntry } from './app/utils/app-shell'
import { SECURITY_MODULE_OPTIONS } from './server/utils/security-headers'

// nuxt-auth-utils would otherwise write a generated secret into .env; we keep it in .data/.
if (process.env.NODE_ENV !== 'production') ensureDevSessionPassword()

export default defineNuxtConfig({
  modules: [
    '@nuxtjs/tailwindcss',
    '@pinia/nuxt',
    '@vueuse/nuxt',
    'nuxt-auth-utils',
    '@vite-pwa/nuxt',
    '@nuxt/eslint',
    'nuxt-security',
  ],
  $development: {
    runtimeConfig: {
      mailCapturePage: true,
      session: { cookie: { secure: false } },
    },
  },
  devtools: { enabled: false },
  app: {
    head: {
      htmlAttrs: { lang: 'en' },
      title: 'Fourfold',
      meta: [
        { name: 'viewport', content: 'width=device-width, initial-scale=1, viewport-fit=cover' },
        { name: 'description', content: 'Teach a job one-on-one with Job Instruction, and prove it.' },
      ],
    },
  },
  css: [
    '@fontsource/atkinson-hyperlegible/400.css',
    '@fontsource/atkinson-hyperlegible/700.css',
    '@fontsource/atkinson-hyperlegible/400-italic.css',
    '~/assets/css/main.css',
  ],
  runtimeConfig: {
    // Every key can be set at run time through NUXT_<KEY> (see README "Configuration").
    databaseUrl: 'file:.data/fourfold.db',
    databaseAuthToken: '',
    migrationsDir: '',
    smtpUrl: '',
    mailFrom: 'Fourfold <no-reply@fourfold.example>',
    mailDir: '.data/mail',
    // The captured-mail page is for development; the demo (npm start) switches it on.
    mailCapturePage: false,
    appUrl: 'http://localhost:3000',
    bodyLimitBytes: 262144,
    // The daily reminder digest (DIGEST_ENABLED, DIGEST_TIME also work; see README).
    digestEnabled: true,
    digestTime: '06:00',
    session: {
      name: 'fourfold-session',
      password: '',
      // Twelve hours: one long shift, then sign in again.
      maxAge: 60 * 60 * 12,
      cookie: { sameSite: 'lax', httpOnly: true, secure: true },
    },
    // Overridable at run time (NUXT_HASH_SCRYPT_COST …) only so the benchmark can compare settings.
    hash: { scrypt: { ...PASSWORD_SCRYPT_SETTINGS } },
  },
  routeRules: {
    // The offline shell is rendered in the browser, so it carries no one's data.
    [APP_SHELL_PATH]: { ssr: false },
    // A lesson lives on the tablet (IndexedDB): render it in the browser online as well, the
    // same way it opens from the shell offline.
    '/lessons/**': { ssr: false },
    // A spot check lives on the tablet too.
    '/checks/**': { ssr: false },
  },
  experimental: {
    // The app manifest tells the browser about new deployments and route rules; the service worker's
    // update prompt already does the first, and no route rule here matters in the browser. Off, it
    // leaves the entry every page loads (and its per-page fetch of /_nuxt/builds/meta/…).
    appManifest: false,
    // A link loads its page's scripts when touched or focused, not as soon as it scrolls into view:
    // the lesson runner's "Back to Today" would otherwise fetch Today's scripts on every lesson.
    // The installed app has every script precached by the service worker anyway.
    defaults: { nuxtLink: { prefetchOn: { visibility: false, interaction: true } } },
  },
  compatibilityDate: '2026-11-01',
  nitro: {
    experimental: { tasks: true },
    // Scripts, styles and the manifest are also written gzip- and brotli-compressed at build time and
    // served so to browsers that accept it (Lighthouse "Enable text compression": the entry is about
    // 340 KiB raw, 125 KiB gzip). Fonts and images are compressed already and stay as they are.
    compressPublicAssets: true,
    // A tick, not the send time: the digest task sends from DIGEST_TIME (run-time setting, 06:00 by
    // default) and later ticks retry failed sends; see server/tasks/reminders/digest.ts.
    // mail:outbox: a safety net for queued mail (each instance retries its own on a timer).
    scheduledTasks: { '*/15 * * * *': ['reminders:digest'], '*/5 * * * *': ['mail:outbox'] },
    hooks: {
      // Ship the committed migrations beside the built server so it can migrate itself.
      compiled(nitro) {
        cpSync(resolve(nitro.options.rootDir, 'drizzle'), resolve(nitro.options.output.serverDir, 'drizzle'), { recursive: true })
      },
    },
  },
  vite: {
    plugins: [dexieModernInBrowser(), oneCopyInBrowser('hookable', 'nuxt')],
    // Every component is <script setup>: without the Options API, Vue's runtime is about 1 KiB
    // (gzip) smaller on every page, the lesson runner included (its scripts are budgeted: at most
    // 2× a bare Nuxt page, tests/budgets).
    // Terser packs the browser's scripts about 5 % tighter than esbuild's minifier (measured on
    // the entry: 125.8 → 119.8 KiB gzip); the build takes a little longer. The server build keeps
    // Nuxt's own settings (readable stack traces).
    $client: {
      define: { __VUE_OPTIONS_API__: 'false' },
      build: {
        minify: 'terser',
        terserOptions: { module: true, ecma: 2020, compress: { passes: 3 }, format: { comments: false } },
        // nuxt-auth-utils' useUserSession (the auth middleware, so every page) imports useRequestFetch
        // through #imports; that pulls in Nuxt's fetch.js and asyncData.js, whose top-level
        // `createUseFetch.__nuxt_factory()` calls Rollup must keep unless told they are pure — with
        // useAsyncData, useFetch and ohash behind them, about 4 KiB gzip on pages that never fetch.
        // They are: defineKeyedFunctionFactory only wraps a function (nuxt/dist/compiler/runtime).
        rollupOptions: {
          treeshake: { manualPureFunctions: ['defineKeyedFunctionFactory', 'createUseAsyncData', 'createUseFetch'] },
        },
        // Every browser a tablet runs (Chromium, Safari 17, Firefox 115 and later) supports
        // <link rel="modulepreload"> itself; the polyfill was dead weight in the entry.
        modulePreload: { polyfill: false },
      },
    },
  },
  typescript: { strict: true },
  hooks: {
    // The shell joins the precache list after @vite-pwa/nuxt's own transform has run.
    'pwa:beforeBuildServiceWorker'(options) {
      const transforms = options.workbox.manifestTransforms ?? []
      if (!transforms.includes(addAppShell)) options.workbox.manifestTransforms = [...transforms, addAppShell]
    },
  },
  auth: {
    hash: { scrypt: { ...PASSWORD_SCRYPT_SETTINGS } },
  },
  eslint: {
    config: { stylistic: true },
  },
  pwa: {
    registerType: 'prompt',
    manifest: {
      name: 'Fourfold',
      short_name: 'Fourfold',
      description: 'Teach a job one-on-one at the workstation, and prove it.',
      theme_color: '#1f3a5f',
      background_color: '#fbf8f3',
      display: 'standalone',
      orientation: 'any',
      start_url: '/',
    },
    pwaAssets: { config: true },
    workbox: {
      // The shell, scripts, styles, fonts and icons; the shell itself is added by the hook below.
      globPatterns: ['**/*.{js,css,woff,woff2,png,svg,ico}'],
      // Never the prerender-style fallback for every navigation: online, the server renders.
      navigateFallback: null,
      // The first install takes charge of the open page at once, so one visit is enough to work
      // offline; an update still waits for the coach's "Update now" (registerType 'prompt').
      clientsClaim: true,
      cleanupOutdatedCaches: true,
      runtimeCaching: [
        {
          // Navigations go to the network first and are never stored, so no signed-in page lands
          // in Cache Storage on a shared tablet; when the network fails, the precached shell
          // answers and the screen reads what it needs from IndexedDB. /api/ is never answered
          // with the shell.
          urlPattern: ({ request, url }) => request.mode === 'navigate' && !url.pathname.startsWith('/api/'),
          handler: 'NetworkOnly',
          options: { precacheFallback: { fallbackURL: APP_SHELL_PATH } },
        },
      ],
    },
    client: { installPrompt: true },
    devOptions: { enabled: false },
  },
  // CSP with a per-response nonce, nosniff, Referrer-Policy, frame-ancestors; see the file.
  security: SECURITY_MODULE_OPTIONS,
})

/**
 * The browser gets Dexie's modern ES module build (dexie/dist/modern) instead of the ES5 UMD file
 * its package points to: about 3 KiB less gzip in the entry every page loads. The server keeps
 * the package's own entry.
 */
function dexieModernInBrowser(): PluginOption {
  return {
    name: 'fourfold:dexie-modern-in-browser',
    enforce: 'pre',
    resolveId(id, importer, options) {
      if (id !== 'dexie' || options?.ssr) return null
      return this.resolve('dexie/dist/modern/dexie.mjs', importer, { ...options, skipSelf: true })
    },
  }
}

/**
 * One copy of `name` in the browser's scripts where npm installed the same version twice: nuxt and
 * unhead each get their own hookable 6 under their node_modules (the top level holds hookable 5 for
 * the server's tools), and both copies were bundled into the entry every page loads (about 1 KiB
 * gzip). Imports of `name` that resolve to another copy of the same version are pointed at the copy
 * `owner` resolves; a copy of another version is left alone. The server keeps npm's layout.
 */
function oneCopyInBrowser(name: string, owner: string): PluginOption {
  const versionAt = (entry: string) => {
    const marker = `/node_modules/${name}/`
    const root = entry.slice(0, entry.lastIndexOf(marker) + marker.length)
    return (JSON.parse(readFileSync(`${root}package.json`, 'utf8')) as { version: string }).version
  }
  let canonical: { id: string, version: string } | null = null
  return {
    name: 'fourfold:one-copy-in-browser',
    enforce: 'pre',
    async resolveId(id, importer, options) {
      if (id !== name || options?.ssr) return null
      const resolved = await this.resolve(id, importer, { ...options, skipSelf: true })
      if (!resolved) return null
      if (!canonical) {
        // Resolved as if imported from the owner's own package.json, i.e. from inside its folder.
        const ownerCopy = await this.resolve(id, createRequire(import.meta.url).resolve(`${owner}/package.json`), { ...options, skipSelf: true })
        if (!ownerCopy) return null
        canonical = { id: ownerCopy.id, version: versionAt(ownerCopy.id) }
      }
      return versionAt(resolved.id) === canonical.version ? canonical.id : resolved
    },
  }
}

async function addAppShell(entries: PrecacheEntry[]) {
  const manifest = await withAppShellEntry(entries)
  return { manifest: manifest.map(e => ({ ...e, size: e.size ?? 0 })), warnings: [] }
}
