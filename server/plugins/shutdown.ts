// Close the database pool when Nitro shuts down (SIGTERM/SIGINT), after in-flight requests finish.
export default defineNitroPlugin((nitro) => {
  nitro.hooks.hook('close', async () => {
    await stopListening()
    await closeDb()
  })
})
