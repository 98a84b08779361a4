// The browser turns zod's compiled parsers off by writing zod's global settings object directly
// (app/utils/zod-jitless.ts), so that no page has to load zod just for that. These checks fail if a
// zod upgrade moves the settings elsewhere (source: zod/v4/core/core.js, `globalConfig` on
// globalThis.__zod_globalConfig, zod 4.x).
import { describe, expect, it } from 'vitest'
import { setZodJitless } from '../../app/utils/zod-jitless'

describe('setZodJitless', () => {
  it('creates the settings object when zod has not loaded yet', () => {
    const holder: { __zod_globalConfig?: { jitless?: boolean } } = {}
    setZodJitless(holder)
    expect(holder.__zod_globalConfig).toEqual({ jitless: true })
  })

  it('keeps the other settings of an object zod made already', () => {
    const holder = { __zod_globalConfig: { jitless: false, customError: 'kept' } as { jitless?: boolean } }
    setZodJitless(holder)
    expect(holder.__zod_globalConfig).toEqual({ jitless: true, customError: 'kept' })
  })

  it('is what zod itself reads as its global config', async () => {
    setZodJitless()
    const { config } = await import('zod/v4/core')
    expect(config().jitless).toBe(true)
    // And the other way round: what zod's own config() sets is on the same object.
    config({ jitless: false })
    expect((globalThis as { __zod_globalConfig?: { jitless?: boolean } }).__zod_globalConfig?.jitless).toBe(false)
    setZodJitless()
    expect(config().jitless).toBe(true)
  })
})
