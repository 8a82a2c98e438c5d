import { json } from '@sveltejs/kit';
import { openApiDocument } from '$lib/server/openapi';
import type { RequestHandler } from './$types';

/** The API's description; public, like the documentation of any API. */
export const GET: RequestHandler = ({ url }) => json(openApiDocument(url.origin));
