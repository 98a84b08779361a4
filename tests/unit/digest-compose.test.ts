// Who is told what in the daily reminder digest, and how the mail says it (server/utils/digest-compose.ts,
// digestMail in server/utils/mail-templates.ts). The rules are Fourfold's own (issue 6, item 7).
import { describe, expect, it } from 'vitest'
import { composeDigests, digestSwitchedOn, digestTimeReached, parseDigestTime, responsibleCoach, type DigestMember, type DueCheckFact, type LatePlanFact } from '../../server/utils/digest-compose'
import { DIGEST_LIST_LIMIT, digestMail } from '../../server/utils/mail-templates'
import { linksIn } from '../../server/utils/mail-links'

const member = (userId: string, role: DigestMember['role'], digestEmails = true): DigestMember => ({ userId, name: `Name ${userId}`, email: `${userId}@bakery.example`, role, digestEmails })
const DAY = 86_400_000
const now = new Date(2026, 11, 2, 6, 0).getTime()

function check(learnerName: string, lesson: [string | null, number] | null, last: [string | null, number] | null = null, extra: Partial<DueCheckFact> = {}): DueCheckFact {
  return {
    learnerId: `l-${learnerName}`,
    learnerName,
    jobId: 'job-1',
    jobTitle: 'Change the slicer blade set',
    nextCheckAt: now - DAY,
    overdue: true,
    lastLesson: lesson ? { coachUserId: lesson[0], at: lesson[1] } : null,
    lastCheck: last ? { coachUserId: last[0], at: last[1] } : null,
    ...extra,
  }
}
const late = (learnerName: string, targetDate: string, progress: LatePlanFact['progress'] = 'not-started'): LatePlanFact =>
  ({ learnerId: `l-${learnerName}`, learnerName, jobId: 'job-2', jobTitle: 'Thread film on the bag sealer', targetDate, progress })

describe('whose spot check it is', () => {
  const coaches = new Set(['anna', 'ben'])
  it('is the coach of the newer of the last lesson and the last check', () => {
    expect(responsibleCoach({ lastLesson: { coachUserId: 'anna', at: 100 }, lastCheck: { coachUserId: 'ben', at: 200 } }, coaches)).toBe('ben')
    expect(responsibleCoach({ lastLesson: { coachUserId: 'anna', at: 300 }, lastCheck: { coachUserId: 'ben', at: 200 } }, coaches)).toBe('anna')
    expect(responsibleCoach({ lastLesson: { coachUserId: 'anna', at: 100 }, lastCheck: null }, coaches)).toBe('anna')
  })
  it('takes the check when both happened at the same instant', () => {
    expect(responsibleCoach({ lastLesson: { coachUserId: 'anna', at: 200 }, lastCheck: { coachUserId: 'ben', at: 200 } }, coaches)).toBe('ben')
  })
  it('falls back to the other coach when the newer one is no longer a coach here, then to nobody', () => {
    expect(responsibleCoach({ lastLesson: { coachUserId: 'anna', at: 100 }, lastCheck: { coachUserId: 'gone', at: 200 } }, coaches)).toBe('anna')
    expect(responsibleCoach({ lastLesson: { coachUserId: null, at: 300 }, lastCheck: { coachUserId: 'ben', at: 200 } }, coaches)).toBe('ben')
    expect(responsibleCoach({ lastLesson: { coachUserId: 'gone', at: 100 }, lastCheck: { coachUserId: null, at: 200 } }, coaches)).toBeNull()
    expect(responsibleCoach({ lastLesson: null, lastCheck: null }, coaches)).toBeNull()
  })
})

describe('composing the digests', () => {
  const members = [member('admin', 'admin'), member('anna', 'coach'), member('ben', 'coach'), member('cara', 'coach', false), member('lena', 'learner'), member('otto', 'auditor')]

  it('gives each coach their own checks, the admins the checks nobody has, and everyone the late plan items', () => {
    const digests = composeDigests(members, [
      check('Ilse', ['anna', 1]),
      check('Tomas', ['ben', 1]),
      check('Mira', ['gone', 1]),
    ], [late('Pia', '2026-11-30')])
    const by = Object.fromEntries(digests.map(d => [d.member.userId, d]))
    expect(Object.keys(by).sort()).toEqual(['admin', 'anna', 'ben'])
    expect(by.anna!.checks.map(c => c.learnerName)).toEqual(['Ilse'])
    expect(by.ben!.checks.map(c => c.learnerName)).toEqual(['Tomas'])
    expect(by.anna!.unassignedChecks).toEqual([])
    expect(by.admin!.checks).toEqual([])
    expect(by.admin!.unassignedChecks.map(c => c.learnerName)).toEqual(['Mira'])
    for (const d of digests) expect(d.late.map(l => l.learnerName)).toEqual(['Pia'])
  })

  it('sends nothing to someone who turned it off, and does not hand their checks to anyone else', () => {
    const digests = composeDigests(members, [check('Ilse', ['cara', 1])], [])
    expect(digests).toEqual([])
  })

  it('counts a coach who turned it off as still their check, not as nobody\'s', () => {
    const digests = composeDigests(members, [check('Ilse', ['cara', 1])], [late('Pia', '2026-11-30')])
    expect(digests.find(d => d.member.userId === 'admin')!.unassignedChecks).toEqual([])
  })

  it('makes no digest when there is nothing to say, and none for learners or auditors', () => {
    expect(composeDigests(members, [], [])).toEqual([])
    const onlyLate = composeDigests(members, [], [late('Pia', '2026-11-30')])
    expect(onlyLate.map(d => d.member.userId).sort()).toEqual(['admin', 'anna', 'ben'])
  })

  it('does not route a check to a learner or auditor who once appeared as its coach', () => {
    const digests = composeDigests(members, [check('Ilse', ['lena', 1])], [])
    expect(digests.map(d => d.member.userId)).toEqual(['admin'])
    expect(digests[0]!.unassignedChecks.map(c => c.learnerName)).toEqual(['Ilse'])
  })

  it('lists the oldest check and the oldest target date first', () => {
    const digests = composeDigests([member('anna', 'coach')], [
      check('Later', ['anna', 1], null, { nextCheckAt: now }),
      check('Earlier', ['anna', 1], null, { nextCheckAt: now - 3 * DAY }),
    ], [late('B', '2026-11-30'), late('A', '2026-11-01')])
    expect(digests[0]!.checks.map(c => c.learnerName)).toEqual(['Earlier', 'Later'])
    expect(digests[0]!.late.map(l => l.learnerName)).toEqual(['A', 'B'])
  })
})

describe('when the scheduled run sends', () => {
  it('reads DIGEST_TIME as a 24-hour time of day', () => {
    expect(parseDigestTime('06:00')).toBe(360)
    expect(parseDigestTime('6:30')).toBe(390)
    expect(parseDigestTime(' 23:59 ')).toBe(23 * 60 + 59)
    for (const bad of ['24:00', '06:60', '6', 'six', '', '06:00:00']) expect(parseDigestTime(bad)).toBeNull()
  })
  it('starts at the digest time of the local day and keeps going until midnight', () => {
    expect(digestTimeReached(new Date(2026, 11, 2, 5, 59).getTime(), 360)).toBe(false)
    expect(digestTimeReached(new Date(2026, 11, 2, 6, 0).getTime(), 360)).toBe(true)
    expect(digestTimeReached(new Date(2026, 11, 2, 23, 45).getTime(), 360)).toBe(true)
    expect(digestTimeReached(new Date(2026, 11, 3, 0, 15).getTime(), 360)).toBe(false)
  })
  it('is on unless DIGEST_ENABLED says false, 0, no or off', () => {
    for (const on of [undefined, null, '', 'true', '1', 'yes', true]) expect(digestSwitchedOn(on)).toBe(true)
    for (const off of ['false', 'FALSE', '0', 'no', ' off ', false]) expect(digestSwitchedOn(off)).toBe(false)
  })
})

describe('the digest mail', () => {
  const links = { today: 'http://localhost:3000/', plan: 'http://localhost:3000/plan', account: 'http://localhost:3000/account' }
  const base = { to: 'anna@bakery.example', name: 'Anna <Baker>', organisation: 'Crumbs & Co', now, links }

  it('lists checks and late plan items in words, with links to Today, the plan and the account page', () => {
    const mail = digestMail({
      ...base,
      checks: [
        { learnerName: 'Ilse', jobTitle: 'Change the slicer blade set', nextCheckAt: new Date(2026, 10, 28, 9).getTime(), overdue: true },
        { learnerName: 'Tomas', jobTitle: 'Check-weigh a tray', nextCheckAt: now, overdue: false },
      ],
      unassignedChecks: [],
      late: [{ learnerName: 'Pia', jobTitle: 'Thread film on the bag sealer', targetDate: '2026-11-30', progress: 'in-training' }],
    })
    expect(mail.subject).toBe('Crumbs & Co: 2 spot checks due, 1 plan item late')
    expect(mail.text).toContain('Spot checks due for learners you taught (2)')
    expect(mail.text).toContain('- Ilse, Change the slicer blade set: overdue since 28 Nov')
    expect(mail.text).toContain('- Tomas, Check-weigh a tray: due today')
    expect(mail.text).toContain('Plan items past their target date (1)')
    expect(mail.text).toContain('- Pia, Thread film on the bag sealer: planned by 30 Nov, in training')
    expect(mail.text).not.toContain('no coach')
    expect(linksIn(mail.text)).toEqual([links.today, links.plan, links.account])
    for (const href of Object.values(links)) expect(mail.html).toContain(`href="${href}"`)
  })

  it('escapes names in the HTML part and keeps them as typed in the text part', () => {
    const mail = digestMail({ ...base, checks: [], unassignedChecks: [{ learnerName: '<script>x</script>', jobTitle: 'A & B', nextCheckAt: now, overdue: false }], late: [] })
    expect(mail.subject).toBe('Crumbs & Co: 1 spot check due')
    expect(mail.text).toContain('Spot checks with no coach (1)')
    expect(mail.text).toContain('<script>x</script>, A & B')
    expect(mail.html).toContain('&lt;script&gt;x&lt;/script&gt;, A &amp; B')
    expect(mail.html).not.toContain('<script>')
    expect(mail.html).toContain('Hello Anna &lt;Baker&gt;,')
  })

  it(`shows at most ${DIGEST_LIST_LIMIT} lines per list and counts the rest`, () => {
    const many = Array.from({ length: DIGEST_LIST_LIMIT + 7 }, (_, i) => ({ learnerName: `Learner ${i}`, jobTitle: 'Grease the mixer gearbox', targetDate: '2026-11-01', progress: 'not-started' as const }))
    const mail = digestMail({ ...base, checks: [], unassignedChecks: [], late: many })
    expect(mail.text).toContain(`Plan items past their target date (${DIGEST_LIST_LIMIT + 7})`)
    expect(mail.text.match(/^- Learner/gm)).toHaveLength(DIGEST_LIST_LIMIT)
    expect(mail.text).toContain('… and 7 more on the plan.')
    expect(mail.html.match(/<li>/g)).toHaveLength(DIGEST_LIST_LIMIT)
  })
})
