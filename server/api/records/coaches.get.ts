// The people a record may name as coach (the Records page's coach filter): current coaches and
// admins, and anyone else who coached a lesson or check. Coaches, admins, auditors.
export default defineEventHandler(async (event) => {
  const caller = await requireRole(event, 'admin', 'coach', 'auditor')
  const db = await useDb()
  const org = caller.organisation.id
  const rows = await db.$client.execute({
    sql: `select u.id, u.name from users u where u.id in (
            select user_id from memberships where organisation_id = ? and role in ('admin', 'coach')
            union select coach_user_id from lessons where organisation_id = ? and coach_user_id is not null
            union select coach_user_id from spot_checks where organisation_id = ? and coach_user_id is not null)
          order by u.name collate nocase, u.id`,
    args: [org, org, org],
  })
  return Array.from(rows.rows, r => ({ id: r.id as string, name: r.name as string }))
})
