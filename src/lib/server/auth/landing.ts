import { isStaff } from './roles';
import { rolesOf } from './session';

/** Where a user lands after signing in when no page asked for them: staff home or account. */
export async function homeFor(userId: string): Promise<string> {
	const roles = await rolesOf(userId);
	return isStaff({ id: userId, email: '', name: '', roles }) ? '/staff' : '/account';
}
