import { error, fail, type RequestEvent } from '@sveltejs/kit';
import type { z } from 'zod';

/**
 * A request the domain declines, with a reason a person can act on. Server functions
 * throw it; form actions turn it into `fail(status, …)` and JSON routes into
 * `{ error: { code, message } }`, so both say the same thing.
 */
export class Refusal extends Error {
	constructor(
		readonly code: string,
		message: string,
		readonly status = 400
	) {
		super(message);
		this.name = 'Refusal';
	}
}

/** Parses input with a zod schema, refusing with the first problem in words. */
export function parseInput<T extends z.ZodType>(schema: T, input: unknown): z.output<T> {
	const parsed = schema.safeParse(input);
	if (parsed.success) return parsed.data;
	const issue = parsed.error.issues[0];
	throw new Refusal('invalid_input', issue.message, 400);
}

/** A form action's answer to a refusal, with the submitted fields echoed back. */
export function formRefusal<F extends Record<string, unknown>>(err: unknown, fields: F) {
	if (err instanceof Refusal) return fail(err.status, { ...fields, message: err.message });
	throw err;
}

/** A refusal as an HTTP error ({ error: { code, message } } in the JSON API); anything else is a server error. */
export function apiRefusal(err: unknown): never {
	if (err instanceof Refusal) error(err.status, { code: err.code, message: err.message });
	throw err;
}

/** Runs a JSON route's work, answering refusals as HTTP errors. */
export async function answer<T>(work: () => T | Promise<T>): Promise<T> {
	try {
		return await work();
	} catch (err) {
		apiRefusal(err);
	}
}

/** The body of a JSON request, or a refusal when it is not JSON. */
export async function jsonBody(event: Pick<RequestEvent, 'request'>): Promise<unknown> {
	try {
		return await event.request.json();
	} catch {
		throw new Refusal('invalid_input', 'Send a JSON object as the request body.', 400);
	}
}

/** Form fields as strings (files and repeated fields are not used by these forms). */
export function formFields(data: FormData): Record<string, string> {
	const fields: Record<string, string> = {};
	for (const [key, value] of data) if (typeof value === 'string') fields[key] = value;
	return fields;
}
