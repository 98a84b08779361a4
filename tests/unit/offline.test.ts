// The rules for working without the server: which screens open offline, what a failed call
// means, how server answers become the tablet's reference data, the shell's precache revision,
// and the tablet's data state in words.
import 'fake-indexeddb/auto'
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { APP_SHELL_PATH, withAppShellEntry } from '../../app/utils/app-shell'
import { closeLocalDb, storePhoto, type OfflineLearner, type OfflineVersion } from '../../app/utils/localdb'
import { REFRESH_AFTER_MS, REMEMBER_FOR_MS, keepForLessons, photoIdsOf, pullNeedsDownload, screenNeedingConnection, serverUnreachable, statusOf, tabletDataStale, tabletDataWords, toOfflineVersion, whenInWords, worksOffline, type VersionAnswer } from '../../app/utils/offline'
import { forgetMember, prunePhotos, rememberedMember, rememberMember, saveTabletDataSummary, storedPhotoKeys, tabletDataSummary } from '../../app/utils/offline-store'
import { kp, single, step } from '../fixtures/breakdowns'

describe('screens that open offline', () => {
  it('are Today, the lesson screens and the needs-a-connection screen', () => {
    for (const path of ['/', '/lessons/new', '/lessons/0b8c1d7e-3f7a-4c55-9d0e-2b1f6a9e4c11', '/lessons/', '/needs-connection'])
      expect(worksOffline(path), path).toBe(true)
    for (const path of ['/jobs', '/jobs/new', '/versions/x/edit', '/settings', '/settings/members', '/account', '/lessonsx', '/sign-in-ish'])
      expect(worksOffline(path), path).toBe(false)
  })

  it('names the screen that needs a connection', () => {
    expect(screenNeedingConnection('/versions/abc/edit')).toBe('The breakdown editor')
    expect(screenNeedingConnection('/settings/members?x=1')).toBe('Members')
    expect(screenNeedingConnection('/settings')).toBe('Settings')
    expect(screenNeedingConnection('/jobs')).toBe('The jobs list')
    expect(screenNeedingConnection('/jobs/123')).toBe('This job')
    expect(screenNeedingConnection('/somewhere')).toBe('This screen')
  })
})

describe('a failed call', () => {
  it('means no connection without an answer or with a server-side failure, and signed out on 401/403', () => {
    expect(serverUnreachable(statusOf(new TypeError('Failed to fetch')))).toBe(true)
    expect(serverUnreachable(statusOf({ response: { status: 503 } }))).toBe(true)
    expect(serverUnreachable(statusOf({ statusCode: 502 }))).toBe(true)
    expect(serverUnreachable(statusOf({ statusCode: 401, response: { status: 401 } }))).toBe(false)
    expect(serverUnreachable(statusOf({ status: 403 }))).toBe(false)
    expect(serverUnreachable(statusOf(null))).toBe(true)
  })
})

describe('reference data', () => {
  const withPhotos = single([
    { ...step('Weigh the flour', [kp('quality', 'Tare the bowl'), { ...kp('safety', 'Bend your knees'), photoId: 'p2' }]), photoId: 'p1' },
    { ...step('Mix', [{ ...kp('knack', 'Listen for the slap'), photoId: 'p1' }]), photoId: null },
  ])

  it('lists every photo of a breakdown once, in reading order', () => {
    expect(photoIdsOf(withPhotos)).toEqual(['p1', 'p2'])
    expect(photoIdsOf(single([step('No photos')]))).toEqual([])
  })

  it('turns a version answer into the tablet\'s record, with the publication time as a number', () => {
    const answer: VersionAnswer & { status: string, revision: number } = {
      id: 'v1', jobId: 'j1', number: 2, status: 'published', revision: 4, publishedAt: '2026-03-01T09:30:00.000Z', content: withPhotos,
      job: { title: 'Mix bread dough', purpose: 'Even rise', hazards: [{ category: 'lifting', description: '25 kg sacks' }], ppe: ['Apron'], toolsAndMaterials: ['Scale'], workplaceArrangement: 'Flour left', workAreaName: 'Bakehouse' },
    }
    const record = toOfflineVersion(answer, 'org')
    expect(record).toEqual({
      id: 'v1', jobId: 'j1', organisationId: 'org', number: 2, publishedAt: Date.UTC(2026, 2, 1, 9, 30), content: withPhotos,
      job: { title: 'Mix bread dough', purpose: 'Even rise', hazards: [{ category: 'lifting', description: '25 kg sacks' }], ppe: ['Apron'], toolsAndMaterials: ['Scale'], workplaceArrangement: 'Flour left', workAreaName: 'Bakehouse' },
    })
    expect(toOfflineVersion({ ...answer, publishedAt: null }, 'org').publishedAt).toBeNull()
  })

  const version = (id: string): OfflineVersion => toOfflineVersion({ id, jobId: `job-${id}`, number: 1, publishedAt: 1, content: single([step(id)]), job: { title: id, purpose: '', hazards: [], ppe: [], toolsAndMaterials: [], workplaceArrangement: '', workAreaName: null } }, 'org')
  const learner = (id: string): OfflineLearner => ({ id, organisationId: 'org', name: id, workAreaName: null, reference: '' })

  it('keeps a version and a learner that a lesson on the tablet still points to, and drops the rest', () => {
    const merged = keepForLessons(
      { versions: [version('v2')], learners: [learner('ann')] },
      { versions: [version('v1'), version('v0'), version('v2')], learners: [learner('ann'), learner('bob'), learner('cy')] },
      [{ versionId: 'v1', learnerId: 'bob' }, { versionId: 'v2', learnerId: 'ann' }],
    )
    expect(merged.versions.map(v => v.id)).toEqual(['v2', 'v1'])
    expect(merged.learners.map(l => l.id)).toEqual(['ann', 'bob'])
    expect(merged.kept).toBe(2)
  })
})

describe('the app shell in the precache list', () => {
  const entries = [
    { url: 'pwa-64x64.png', revision: 'a4f8', size: 10 },
    { url: '_nuxt/entry.abc.js', revision: null, size: 20 },
  ]

  it('is added once with a revision that follows the rest of the list', async () => {
    const first = await withAppShellEntry(entries)
    expect(first.filter(e => e.url === APP_SHELL_PATH)).toHaveLength(1)
    const shell = first.find(e => e.url === APP_SHELL_PATH)!
    expect(shell.revision).toMatch(/^[0-9a-f]{32}$/)
    // Same build output, same revision, also when the transform runs twice or the order differs.
    expect((await withAppShellEntry([...entries].reverse())).find(e => e.url === APP_SHELL_PATH)!.revision).toBe(shell.revision)
    const twice = await withAppShellEntry(first)
    expect(twice.filter(e => e.url === APP_SHELL_PATH)).toEqual([shell])
    // A new entry file (a new build) changes it.
    const rebuilt = await withAppShellEntry([entries[0]!, { url: '_nuxt/entry.def.js', revision: null, size: 20 }])
    expect(rebuilt.find(e => e.url === APP_SHELL_PATH)!.revision).not.toBe(shell.revision)
  })
})

describe('the tablet\'s data in words', () => {
  // The tablet's own clock and time zone: local times, so the words are the same in every zone.
  const at = new Date(2026, 2, 3, 10, 42).getTime()

  it('gives the time today and the date on another day', () => {
    expect(whenInWords(at, at + 60_000)).toBe('10:42')
    expect(whenInWords(at, new Date(2026, 2, 3, 23, 59).getTime())).toBe('10:42')
    expect(whenInWords(at, new Date(2026, 2, 4, 0, 1).getTime())).toBe('3 March, 10:42')
    expect(whenInWords(at, new Date(2027, 0, 5).getTime())).toBe('3 March 2026, 10:42')
  })

  it('is refreshed on opening the app only when missing or older than ten minutes', () => {
    expect(tabletDataStale(null, at)).toBe(true)
    expect(tabletDataStale({ at }, at + REFRESH_AFTER_MS - 1)).toBe(false)
    expect(tabletDataStale({ at }, at + REFRESH_AFTER_MS)).toBe(true)
    // A clock set back since: do not trust the old time.
    expect(tabletDataStale({ at }, at - 60_000)).toBe(true)
  })

  it('is downloaded after a pull that shows a change, and once, not twice, on a first visit', () => {
    const idle = { downloading: false, summary: { at } }
    // A later pull: only a change in breakdowns or the roster downloads again, fresh data or not.
    expect(pullNeedsDownload({ first: false, changed: true }, idle, at + 1000)).toBe(true)
    expect(pullNeedsDownload({ first: false, changed: false }, { downloading: false, summary: null }, at)).toBe(false)
    expect(pullNeedsDownload({ first: false, changed: true }, { downloading: true, summary: null }, at)).toBe(true)
    // A first pull lists everything: the download opening the app started (running, or just done) has it.
    expect(pullNeedsDownload({ first: true, changed: true }, { downloading: true, summary: null }, at)).toBe(false)
    expect(pullNeedsDownload({ first: true, changed: true }, idle, at + 1000)).toBe(false)
    // …but nothing downloaded, or only long ago (that download failed, or never started): download now.
    expect(pullNeedsDownload({ first: true, changed: true }, { downloading: false, summary: null }, at)).toBe(true)
    expect(pullNeedsDownload({ first: true, changed: false }, idle, at + REFRESH_AFTER_MS)).toBe(true)
  })

  it('counts breakdowns, people and photos, and says when photos are missing', () => {
    expect(tabletDataWords(null, at)).toEqual(['Nothing downloaded to this tablet yet.'])
    const words = tabletDataWords({ organisationId: 'o', breakdowns: 4, learners: 9, photos: 11, photosMissing: 1, at }, at)
    expect(words).toEqual([
      'Breakdowns on this tablet: 4, updated 10:42',
      'People on the roster: 9. Photos: 11.',
      '1 photo could not be downloaded; the next refresh tries again.',
    ])
  })
})

describe('what the tablet remembers (Dexie, fake-indexeddb)', () => {
  beforeEach(async () => {
    await closeLocalDb()
    indexedDB.deleteDatabase('fourfold')
  })
  afterEach(() => closeLocalDb())

  const me = { user: { id: 'u1', name: 'Cora', email: 'c@example.test' }, organisation: { id: 'o1', name: 'Hollowmere Bakery', coachesMayPublish: true }, role: 'coach' as const }

  it('remembers the last member until signing out forgets them', async () => {
    expect(await rememberedMember()).toBeNull()
    await rememberMember(me)
    await closeLocalDb()
    expect(await rememberedMember()).toEqual(me)
    await forgetMember()
    expect(await rememberedMember()).toBeNull()
  })

  it('opens offline no longer than a session lasts after the server first confirmed the member here', async () => {
    const t0 = Date.UTC(2026, 2, 3, 6, 0)
    await rememberMember(me, t0)
    // Confirmed again later: the clock does not restart for the same member.
    await rememberMember({ ...me, role: 'admin' }, t0 + 3 * 3_600_000)
    expect(await rememberedMember(t0 + 11 * 3_600_000)).toEqual({ ...me, role: 'admin' })
    expect(await rememberedMember(t0 + REMEMBER_FOR_MS)).toBeNull()
    // Another member signing in on the tablet starts their own clock.
    const other = { ...me, user: { ...me.user, id: 'u2', name: 'Ada' } }
    await rememberMember(other, t0 + 13 * 3_600_000)
    expect(await rememberedMember(t0 + 14 * 3_600_000)).toEqual(other)
    expect(REMEMBER_FOR_MS).toBe(12 * 3_600_000)
  })

  it('keeps a summary per organisation', async () => {
    await saveTabletDataSummary({ organisationId: 'o1', breakdowns: 2, learners: 3, photos: 1, photosMissing: 0, at: 5 })
    expect(await tabletDataSummary('o1')).toMatchObject({ breakdowns: 2, at: 5 })
    expect(await tabletDataSummary('o2')).toBeNull()
  })

  it('prunes photos that no stored breakdown shows', async () => {
    const blob = new Blob(['x'], { type: 'image/png' })
    await storePhoto('keep', 'full', blob)
    await storePhoto('keep', 'thumb', blob)
    await storePhoto('old', 'full', blob)
    expect(await prunePhotos(new Set(['keep']))).toBe(1)
    expect([...await storedPhotoKeys()].sort()).toEqual(['keep:full', 'keep:thumb'])
  })
})
