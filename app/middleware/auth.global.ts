// Signed-out visitors reach only the public pages; a page may also name the roles it is for
// (definePageMeta({ roles: ['admin'] })). The server enforces the same rules on its own.
import type { Role } from '#shared/types/roles'

const PUBLIC_PAGES = new Set(['/sign-in', '/sign-up', '/forgot-password', '/reset-password', '/accept-invite', '/dev/mail'])

export default defineNuxtRouteMiddleware(async (to) => {
  if (PUBLIC_PAGES.has(to.path)) return
  const { loggedIn } = useUserSession()
  if (!loggedIn.value) return navigateTo({ path: '/sign-in', query: to.fullPath !== '/' ? { next: to.fullPath } : {} })
  const member = useMemberStore()
  if (!member.me) await member.refresh()
  if (!member.me) return navigateTo('/sign-in')
  const roles = to.meta.roles as Role[] | undefined
  if (roles && !roles.includes(member.me.role)) return navigateTo('/')
})
