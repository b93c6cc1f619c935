import { loadSetPassword, submitSetPassword } from '$lib/server/auth/set-password-route';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = ({ params }) => loadSetPassword(params.token, 'invite');

export const actions: Actions = {
	default: (event) => submitSetPassword(event, 'invite')
};
