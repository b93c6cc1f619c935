/**
 * Settings read from the environment. Plain process.env (not $env) so scripts and tests share
 * this module with the app.
 */
export function appOrigin(): string {
	return (process.env.ORIGIN ?? `http://localhost:${process.env.PORT ?? 3000}`).replace(/\/$/, '');
}

export function mailFrom(): string {
	return process.env.MAIL_FROM ?? 'Tideward <no-reply@tideward.test>';
}

export const SIGN_IN_LINK_MINUTES = 20;
export const PASSWORD_RESET_MINUTES = 60;
export const INVITE_DAYS = 7;
