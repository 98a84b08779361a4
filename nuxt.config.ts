import { cpSync } from 'node:fs'
import { resolve } from 'node:path'
import { ensureDevSessionPassword } from './scripts/session-secret.mjs'
import { PASSWORD_SCRYPT_SETTINGS } from './server/utils/password-settings'

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
  compatibilityDate: '2026-11-01',
  nitro: {
    experimental: { tasks: true },
    hooks: {
      // Ship the committed migrations beside the built server so it can migrate itself.
      compiled(nitro) {
        cpSync(resolve(nitro.options.rootDir, 'drizzle'), resolve(nitro.options.output.serverDir, 'drizzle'), { recursive: true })
      },
    },
  },
  typescript: { strict: true },
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
      globPatterns: ['**/*.{js,css,woff,woff2,png,svg,ico}'],
      navigateFallback: null,
      runtimeCaching: [
        {
          // Navigations: network first, so a signed-in page is always fresh when online.
          urlPattern: ({ request, url }) => request.mode === 'navigate' && !url.pathname.startsWith('/api/'),
          handler: 'NetworkFirst',
          options: { cacheName: 'fourfold-pages', networkTimeoutSeconds: 4, expiration: { maxEntries: 30 } },
        },
      ],
    },
    client: { installPrompt: true },
    devOptions: { enabled: false },
  },
})
