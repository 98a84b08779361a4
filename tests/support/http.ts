// A tiny HTTP client with a cookie jar, so a test can act as one signed-in person.
export interface Reply<T = any> { status: number, headers: Headers, body: T, text: string, bytes: Buffer }

export class Client {
  private cookies = new Map<string, string>()
  constructor(readonly base: string, readonly address = '127.0.0.1') {}

  /** Another client with the same cookies, so the same session: signing out in either ends it for both. */
  clone(): Client {
    const copy = new Client(this.base, this.address)
    for (const [k, v] of this.cookies) copy.cookies.set(k, v)
    return copy
  }

  get signedIn() {
    return this.cookies.size > 0
  }

  /** A body is sent as JSON, except a string (sent as given) and FormData (multipart, for uploads). */
  async request<T = any>(method: string, path: string, body?: unknown, headers: Record<string, string> = {}): Promise<Reply<T>> {
    const multipart = body instanceof FormData
    const init: RequestInit = {
      method,
      redirect: 'manual',
      headers: {
        'x-forwarded-for': this.address,
        ...(body !== undefined && typeof body !== 'string' && !multipart ? { 'content-type': 'application/json' } : {}),
        ...(typeof body === 'string' ? { 'content-type': 'application/json' } : {}),
        ...(this.cookies.size ? { cookie: [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ') } : {}),
        ...headers,
      },
      body: body === undefined ? undefined : multipart ? body : typeof body === 'string' ? body : JSON.stringify(body),
    }
    const res = await fetch(this.base + path, init)
    for (const line of res.headers.getSetCookie()) {
      const [pair] = line.split(';')
      const eq = pair!.indexOf('=')
      const name = pair!.slice(0, eq).trim()
      const value = pair!.slice(eq + 1).trim()
      if (!value || /max-age=0/i.test(line) || /expires=Thu, 01 Jan 1970/i.test(line)) this.cookies.delete(name)
      else this.cookies.set(name, value)
    }
    const bytes = Buffer.from(await res.arrayBuffer())
    const text = bytes.toString('utf8')
    let parsed: unknown = text
    try {
      parsed = text ? JSON.parse(text) : null
    }
    catch { /* not JSON */ }
    return { status: res.status, headers: res.headers, body: parsed as T, text, bytes }
  }

  get<T = any>(path: string) {
    return this.request<T>('GET', path)
  }

  post<T = any>(path: string, body?: unknown) {
    return this.request<T>('POST', path, body ?? {})
  }

  patch<T = any>(path: string, body?: unknown) {
    return this.request<T>('PATCH', path, body ?? {})
  }

  delete<T = any>(path: string) {
    return this.request<T>('DELETE', path)
  }
}

let counter = 0
/** A distinct client address per scenario, so sign-in throttling of one test never touches another. */
export function uniqueAddress(): string {
  counter += 1
  return `10.${(process.pid >> 8) & 255}.${process.pid & 255}.${counter % 250}`
}
