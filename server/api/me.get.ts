// Who is signed in: user, organisation and role. Any signed-in member.
export default defineEventHandler(async (event) => {
  const { user, organisation, membership } = await requireSignedIn(event)
  return { user, organisation, role: membership.role }
})
