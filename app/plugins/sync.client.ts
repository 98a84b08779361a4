// Sync when the connection returns, and once at start when signed in.
export default defineNuxtPlugin(() => {
  const online = useOnline()
  const member = useMemberStore()
  const { syncNow, watchOutbox } = useSync()
  watch(() => member.me?.organisation.id, (id) => {
    if (!id) return
    watchOutbox()
    if (online.value) syncNow()
  }, { immediate: true })
  watch(online, (isOnline) => {
    if (isOnline && member.me) syncNow()
  })
})
