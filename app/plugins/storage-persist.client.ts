// Asks the browser to keep this site's storage (navigator.storage.persist) once someone is signed
// in, so lessons not yet sent to the server are not cleared when the tablet runs short of space.
// The answer is shown on Today ("Storage kept: yes/no").
export default defineNuxtPlugin(() => {
  const member = useMemberStore()
  const state = useStorageKept()
  let asked = false

  async function ask() {
    asked = true
    const storage = navigator.storage as StorageManager | undefined
    if (!storage?.persist || !storage.persisted) {
      state.value = { kept: false, supported: false }
      return
    }
    try {
      state.value = { kept: (await storage.persisted()) || (await storage.persist()), supported: true }
    }
    catch {
      state.value = { kept: false, supported: true }
    }
  }

  // After hydration: the answer changes Today's words, which must first match the server's HTML.
  onNuxtReady(() => {
    watch(() => member.me?.user.id, (userId) => {
      if (userId && !asked) void ask()
    }, { immediate: true })
  })
})
