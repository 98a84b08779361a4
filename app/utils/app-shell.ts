// The app shell: one client-rendered page (routeRules ssr: false) that the service worker
// precaches and serves for a navigation the network cannot answer. It holds no one's data, so a
// shared tablet keeps no signed-in page in Cache Storage; the screens then read IndexedDB.
// Imported by nuxt.config.ts at build time as well as by the app, so it stays free of Node and
// browser-only imports.

export const APP_SHELL_PATH = '/app-shell'

export interface PrecacheEntry { url: string, revision: string | null, size?: number }

/**
 * The precache list with the shell added. The shell's HTML names the build's entry files and
 * build id, so its revision is a digest of every other entry: it changes exactly when the
 * build does, and a rebuild of the same output keeps it.
 */
export async function withAppShellEntry(entries: readonly PrecacheEntry[]): Promise<PrecacheEntry[]> {
  const others = entries.filter(e => e.url !== APP_SHELL_PATH)
  const fingerprint = others.map(e => `${e.url} ${e.revision ?? ''}`).sort().join('\n')
  const digest = await globalThis.crypto.subtle.digest('SHA-256', new TextEncoder().encode(fingerprint))
  const revision = [...new Uint8Array(digest)].map(b => b.toString(16).padStart(2, '0')).join('').slice(0, 32)
  return [...others, { url: APP_SHELL_PATH, revision }]
}
