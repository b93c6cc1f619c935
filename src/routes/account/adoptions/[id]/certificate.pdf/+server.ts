import { error } from '@sveltejs/kit';
import { requireRoles } from '$lib/server/auth/roles';
import { certificatePdf } from '$lib/server/adoptions/certificate';
import { certificateFor } from '$lib/server/adoptions/certificate-data';
import type { RequestHandler } from './$types';

/** The adoption certificate of one of the signed-in account's adoptions, as a PDF download. */
export const GET: RequestHandler = async (event) => {
	const user = requireRoles(event);
	// Someone else's adoption answers exactly like a missing one.
	const certificate = await certificateFor(event.params.id, user.id);
	if (!certificate) error(404, 'There is no such adoption in your account.');
	const pdf = await certificatePdf(certificate);
	const filename = `${certificate.patientSlug.replace(/[^a-z0-9-]/gi, '') || 'patient'}-adoption-certificate.pdf`;
	return new Response(new Uint8Array(pdf), {
		headers: {
			'content-type': 'application/pdf',
			'content-length': String(pdf.length),
			'content-disposition': `attachment; filename="${filename}"`,
			'cache-control': 'private, no-store',
			'x-content-type-options': 'nosniff'
		}
	});
};
