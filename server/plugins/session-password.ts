// Without a session password of 32+ characters every session call fails with a 500.
// Say so once, plainly, at start instead.
export default defineNitroPlugin(() => {
  if (import.meta.prerender) return
  const password = useRuntimeConfig().session?.password ?? ''
  if (password.length < 32) {
    console.error('[fourfold] NUXT_SESSION_PASSWORD must be set to at least 32 characters; sign-in will not work until it is.')
  }
})
