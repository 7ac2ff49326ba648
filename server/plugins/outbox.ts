// Deliver queued e-mail in the background. Without SMTP_URL there is nothing to send with: mail stays
// queued until an instance with SMTP_URL starts. Stops before the database pool closes (shutdown.ts).
export default defineNitroPlugin((nitro) => {
  if (!process.env.SMTP_URL) return
  const worker = startOutboxWorker(useDb)
  nitro.hooks.hook('close', () => worker.stop())
})
