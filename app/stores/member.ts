// Who is signed in, their organisation and role, as the server last said (GET /api/me).
// The server re-checks the role on every request; this only decides what to show.
// In the browser the last answer is also kept on the tablet, so a signed-in coach can open the
// offline screens with no connection; whenever the server answers, its answer replaces it.
import { defineStore } from 'pinia'
import type { Role } from '#shared/types/roles'
import { serverUnreachable, statusOf } from '~/utils/offline'
import { takeEarlyMe } from '~/utils/early-me'

export interface Me {
  user: { id: string, name: string, email: string }
  organisation: { id: string, name: string, coachesMayPublish: boolean }
  role: Role
  /** The person's own settings; absent in an answer remembered on the tablet from before they existed. */
  settings?: { digestEmails: boolean }
}

export const useMemberStore = defineStore('member', () => {
  const me = ref<Me | null>(null)
  /** True when `me` is the tablet's remembered answer because the server could not be reached. */
  const fromDevice = ref(false)
  const role = computed(() => me.value?.role ?? null)
  const isAdmin = computed(() => role.value === 'admin')

  async function refresh() {
    try {
      // The answer asked as a browser-rendered page started (utils/early-me.ts), else a new request.
      me.value = await ((import.meta.client ? takeEarlyMe<Me>() : null) ?? useRequestFetch()<Me>('/api/me'))
      fromDevice.value = false
      if (import.meta.client) await remember(me.value)
    }
    catch (error) {
      if (import.meta.client && serverUnreachable(statusOf(error))) {
        const { rememberedMember } = await import('~/utils/offline-store')
        me.value = await rememberedMember().catch(() => null)
        fromDevice.value = me.value !== null
      }
      else {
        // The server answered: not signed in (or no longer a member).
        me.value = null
        fromDevice.value = false
        if (import.meta.client) await forgetOnDevice()
      }
    }
    return me.value
  }

  /** Keeps the server's answer on the tablet (called after any answer that came from the server). */
  async function remember(answer: Me) {
    const { rememberMember } = await import('~/utils/offline-store')
    await rememberMember(answer).catch(() => undefined)
  }

  async function forgetOnDevice() {
    const { forgetMember } = await import('~/utils/offline-store')
    await forgetMember().catch(() => undefined)
  }

  /** Signing out: forget here and on the tablet. */
  async function forget() {
    me.value = null
    fromDevice.value = false
    if (import.meta.client) await forgetOnDevice()
  }

  return { me, fromDevice, role, isAdmin, refresh, remember, forget }
})
