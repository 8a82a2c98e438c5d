import { defaultToleranceMs } from '$lib/sync/timing-table';
import { canonicalQuery, defaultInstantCount, exportsOfSession, parseTableQuery, timingTableOf, type TimingTableResult } from '$lib/server/exports';
import { requirePermission } from '$lib/server/guard';
import { Refusal } from '$lib/server/refusal';
import { can } from '$lib/permissions';
import type { PageServerLoad } from './$types';

const PAGE_SIZE = 50;

/** The page's own form sends every field; keep only the chosen way of placing instants. */
function pageQuery(url: URL): URLSearchParams {
	const params = new URLSearchParams(url.searchParams);
	const mode = params.get('mode');
	if (mode) {
		for (const key of ['every', 'count', 'frameOf'] as const) {
			const wanted = { every: 'every', count: 'count', frames: 'frameOf' }[mode];
			if (key !== wanted) params.delete(key);
		}
	}
	return params;
}

export const load = (async (event) => {
	const { scope, role } = requirePermission(event, 'sessions:read');
	const session = scope.session(event.params.id);
	const params = pageQuery(event.url);
	let result: TimingTableResult | null = null;
	let problem: string | null = null;
	try {
		const { request } = parseTableQuery(params);
		result = await timingTableOf(scope, session.id, request);
	} catch (e) {
		if (!(e instanceof Refusal)) throw e;
		problem = e.message;
		// A bad field should not hide the table: show the defaults beside the message.
		if (e.code === 'invalid_input' || e.code === 'unknown_camera' || e.code === 'camera_unavailable' || e.code === 'too_many_rows') {
			try {
				result = await timingTableOf(scope, session.id, { instants: null, cameras: null, toleranceMs: null });
			} catch (again) {
				if (!(again instanceof Refusal)) throw again;
			}
		}
	}
	const span = session.usableStartSeconds !== null && session.usableEndSeconds !== null ? session.usableEndSeconds - session.usableStartSeconds : null;
	const base = {
		session: { id: session.id, name: session.name, site: session.site, status: session.status, version: session.version },
		canExport: can(role, 'exports:create'),
		confirmedUnapproved: event.url.searchParams.get('unapproved') === 'ok',
		defaultCount: span !== null ? defaultInstantCount(span) : 100,
		problem,
		history: exportsOfSession(scope, session.id)
	};
	if (!result) return { ...base, table: null };

	const { table, cameras, resolved } = result;
	const pageCount = Math.max(1, Math.ceil(table.rows.length / PAGE_SIZE));
	const page = Math.min(pageCount, Math.max(1, Math.floor(Number(event.url.searchParams.get('page')) || 1)));
	const allCameras = cameras.filter((c) => c.unavailable === null).every((c) => resolved.cameras.includes(c.id));
	return {
		...base,
		cameras,
		resolved,
		query: canonicalQuery(resolved, allCameras).toString(),
		defaultToleranceMs: defaultToleranceMs(result.inputs),
		table: {
			approved: table.approved,
			usableSpan: table.usableSpan,
			toleranceMs: table.toleranceMs,
			toleranceRule: table.toleranceRule,
			clips: table.clips,
			summary: table.summary,
			rows: table.rows.slice((page - 1) * PAGE_SIZE, page * PAGE_SIZE)
		},
		page,
		pageCount,
		pageSize: PAGE_SIZE
	};
}) satisfies PageServerLoad;
