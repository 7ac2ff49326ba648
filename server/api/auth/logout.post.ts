/** POST /api/auth/logout — end the session (always 200, also when already signed out). */
export default defineEventHandler(async (event) => {
  const session = await getUserSession(event)
  if (session.user) {
    await writeAudit(useDb(), { actorId: session.user.id, action: 'auth.logout', entity: 'user', entityId: session.user.id }, event)
  }
  await clearUserSession(event)
  return { ok: true }
})
