import { z } from 'zod';

export const SessionFields = z.object({
	name: z.string().trim().min(1, 'Give the capture session a name.').max(200, 'Keep the name under 200 characters.'),
	site: z.string().trim().max(200, 'Keep the site under 200 characters.').default(''),
	captureDate: z
		.string()
		.trim()
		.regex(/^(\d{4}-\d{2}-\d{2})?$/, 'Give the capture date as YYYY-MM-DD.')
		.transform((v) => v || null)
		.nullable()
		.default(null),
	rigNotes: z.string().trim().max(4000, 'Keep the rig notes under 4000 characters.').default('')
});

export const SessionEditFields = SessionFields.partial().extend({
	version: z.number().int().positive('Send the version of the session you edited.')
});
