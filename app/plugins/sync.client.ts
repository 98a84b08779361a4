// Sync when the connection returns, and once at start when signed in.
export default defineNuxtPlugin(() => {
  const member = useMemberStore()
  const { syncNow, watchOutbox } = useSync()
  // Only once the server-rendered page has hydrated (app:mounted is too early: the page's lazy
  // components hydrate later): a sync started before would change the shared sync state
  // ("Sending…") under the page while Vue still compares it with the server's HTML.
  onNuxtReady(() => {
    watch(() => member.me?.organisation.id, (id) => {
      if (!id) return
      watchOutbox()
      if (navigator.onLine) syncNow()
    }, { immediate: true })
  })
  // The browser's own event: it fires when the tablet is back on a network.
  window.addEventListener('online', () => {
    if (member.me) syncNow()
  })
})
