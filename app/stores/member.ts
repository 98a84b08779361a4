// Who is signed in, their organisation and role, as the server last said (GET /api/me).
// The server re-checks the role on every request; this only decides what to show.
import { defineStore } from 'pinia'
import type { Role } from '#shared/types/roles'

interface Me {
  user: { id: string, name: string, email: string }
  organisation: { id: string, name: string, coachesMayPublish: boolean }
  role: Role
}

export const useMemberStore = defineStore('member', () => {
  const me = ref<Me | null>(null)
  const role = computed(() => me.value?.role ?? null)
  const isAdmin = computed(() => role.value === 'admin')

  async function refresh() {
    try {
      me.value = await useRequestFetch()<Me>('/api/me')
    }
    catch {
      me.value = null
    }
    return me.value
  }

  function forget() {
    me.value = null
  }

  return { me, role, isAdmin, refresh, forget }
})
