// Who is signed in, asked as the app starts on a page rendered in the browser (the lesson runner, a
// spot check, the offline shell). There nuxt-auth-utils' plugin first waits for GET /api/_auth/session,
// and only then would the auth middleware ask GET /api/me: two round trips one after the other before
// the page may open. plugins/0.ask-me-early.client.ts asks /api/me beside the session request; the
// member store takes that answer for its first refresh, once (a later refresh asks the server anew).
let early: Promise<unknown> | null = null

export function askMeEarly(ask: () => Promise<unknown>): void {
  early = ask()
  // Whoever takes it handles a failure; until then an unreachable server is no unhandled rejection.
  early.catch(() => undefined)
}

/** The early answer, if one was asked and not yet taken. */
export function takeEarlyMe<T>(): Promise<T> | null {
  const answer = early as Promise<T> | null
  early = null
  return answer
}
