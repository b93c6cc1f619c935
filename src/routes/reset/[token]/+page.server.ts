import { loadSetPassword, submitSetPassword } from '$lib/server/auth/set-password-route';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = ({ params }) => loadSetPassword(params.token, 'password_reset');

export const actions: Actions = {
	default: (event) => submitSetPassword(event, 'password_reset')
};
