// Sync when the connection returns, and once at start when signed in.
export default defineNuxtPlugin(() => {
  const member = useMemberStore()
  const { syncNow, watchOutbox } = useSync()
  watch(() => member.me?.organisation.id, (id) => {
    if (!id) return
    watchOutbox()
    if (navigator.onLine) syncNow()
  }, { immediate: true })
  // The browser's own event: it fires when the tablet is back on a network.
  window.addEventListener('online', () => {
    if (member.me) syncNow()
  })
})
