// Placeholder replaced by the mail work: starts the local catcher (when SMTP_URL is unset) and
// the outbox worker.
export async function startMail(): Promise<void> {}
export async function stopMail(): Promise<void> {}
