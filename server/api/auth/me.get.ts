/** GET /api/auth/me — the signed-in person: { id, name, email, role }. */
export default defineEventHandler(async (event) => {
  const { user } = await requireSignedIn(event)
  return { id: user.id, name: user.name, email: user.email, role: user.role, facilityId: user.facilityId }
})
