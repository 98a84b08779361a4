// Keeps the tablet ready to work offline: remembers the signed-in member on the device, fetches
// the reference data (breakdowns, photos, roster) after sign-in, and when the connection returns
// asks the server again who is signed in before refreshing that data.
import { runsLessons } from '~/composables/useOfflineData'
import { tabletDataStale } from '~/utils/offline'

export default defineNuxtPlugin(() => {
  const member = useMemberStore()
  const online = useOnline()
  const offlineData = useOfflineData()
  const { fetch: fetchSession } = useUserSession()

  // Only once the server-rendered page has hydrated (and the browser is idle): state changed before
  // would differ from the server's HTML under Vue's comparison (a hydration mismatch), and the
  // download would compete with the page's own start.
  onNuxtReady(() => {
    // A server-rendered first page brings `me` in the payload: keep it on the tablet too.
    watch(() => member.me, async (me) => {
      if (!me || member.fromDevice) return
      await member.remember(me)
    }, { immediate: true })

    // Signed in (or another member signed in on this tablet): download their organisation's data,
    // unless this tablet downloaded it a moment ago.
    watch(() => [member.me?.organisation.id, member.me?.role, member.fromDevice] as const, async ([organisationId, role, fromDevice]) => {
      if (!organisationId) return
      await offlineData.load()
      if (fromDevice || !online.value || !runsLessons(role)) return
      if (tabletDataStale(offlineData.state.value.summary, Date.now())) await offlineData.refresh()
    }, { immediate: true })

    // Back online: the server decides again who is signed in, then the data is refreshed.
    watch(online, async (isOnline, wasOnline) => {
      if (!isOnline || wasOnline) return
      if (!member.me) return
      await fetchSession()
      const me = await member.refresh()
      if (!me) {
        await navigateTo('/sign-in')
        return
      }
      if (!member.fromDevice) await offlineData.refresh()
    })
  })
})
