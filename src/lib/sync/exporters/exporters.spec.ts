import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Papa from 'papaparse';
import { describe, expect, it } from 'vitest';
import { buildTimingTable, type TimingTable } from '../timing-table';
import { demoInput, demoRig } from '../timing-table.test-rig';
import { clipsCsv, CLIPS_HEADER, instantsCsv, instantsHeader } from './csv';
import { decimal, fileStem } from './common';
import { timingJson, TIMING_TABLE_SCHEMA } from './json';
import { timingOtio } from './otio';
import { extractionScript, selectExpression, shellQuote } from './script';
import { timingSummary } from './summary';

const table = (overrides = {}) => buildTimingTable(demoInput(overrides));
const approved = () => buildTimingTable(demoInput({ session: { ...demoInput().session, status: 'approved' } }));

describe('CSV (RFC 4180)', () => {
	it('reads back with papaparse as the same table', () => {
		const t = table();
		const text = instantsCsv(t);
		// RFC 4180 §2: CRLF between records.
		expect(text.split('\r\n')[0]).toBe(instantsHeader(t).join(','));
		const parsed = Papa.parse<Record<string, string>>(text, { header: true, skipEmptyLines: true });
		expect(parsed.errors).toEqual([]);
		expect(parsed.data).toHaveLength(t.rows.length);
		parsed.data.forEach((record, i) => {
			const row = t.rows[i];
			expect(record.approval).toBe('UNAPPROVED');
			expect(Number(record.session_revision)).toBe(3);
			expect(Number(record.instant)).toBe(row.index);
			expect(Number(record.session_time_s)).toBe(row.sessionSeconds);
			t.clips.forEach((clip, c) => {
				const cell = row.cells[c]!;
				expect(Number(record[`${clip.key}_frame`])).toBe(cell.index);
				expect(Number(record[`${clip.key}_time_s`])).toBe(cell.timeSeconds);
				expect(record[`${clip.key}_timecode`]).toBe(cell.timecode);
				expect(Number(record[`${clip.key}_residual_ms`])).toBe(cell.residualMs);
			});
			expect(Number(record.worst_residual_ms)).toBe(row.worstResidualMs);
			expect(record.flagged).toBe(row.flagged ? 'yes' : 'no');
		});
	});

	it('quotes fields with commas and quotes; the clips table reads back', () => {
		const t = table();
		const text = clipsCsv(t);
		expect(text).toContain('"Rig low, ""housing"""');
		const parsed = Papa.parse<string[]>(text, { skipEmptyLines: true });
		expect(parsed.data[0]).toEqual(CLIPS_HEADER);
		expect(parsed.data[3][2]).toBe('Rig low, "housing"');
		expect(parsed.data[3][5]).toBe('low, housed.mp4');
		expect(parsed.data[2][9]).toBe('50/1');
		expect(parsed.data[1][14]).toBe('00:00:00;00');
		expect(Number(parsed.data[2][7])).toBe(2.4995);
	});

	it('writes decimals without exponents or trailing zeros', () => {
		expect(decimal(1e-9, 9)).toBe('0.000000001');
		expect(decimal(2.5, 6)).toBe('2.5');
		expect(decimal(-0.0000001, 6)).toBe('0');
		expect(decimal(12, 3)).toBe('12');
	});
});

describe('JSON', () => {
	it('carries the versioned schema, the unapproved notice and every row', () => {
		const t = table();
		const doc = JSON.parse(timingJson(t));
		expect(doc.schema).toBe(TIMING_TABLE_SCHEMA);
		expect(doc.approval).toBe('unapproved');
		expect(doc.notice).toMatch(/^UNAPPROVED: revision 3/);
		expect(Object.keys(doc)).toEqual(['schema', 'approval', 'notice', 'session', 'formula', 'usableSpan', 'instants', 'toleranceMs', 'toleranceRule', 'summary', 'cameras', 'rows']);
		expect(doc.cameras.map((c: { key: string }) => c.key)).toEqual(['rig_high', 'rig_mid', 'rig_low_housing']);
		expect(doc.rows).toHaveLength(t.rows.length);
		expect(doc.rows[10].frames.rig_mid).toEqual({ frame: 565, timeSeconds: 11.3, timecode: '00:00:11:15', residualMs: t.rows[10].cells[1]!.residualMs });
		expect(JSON.parse(timingJson(approved())).notice).toBeNull();
	});

	it('is byte-identical for the same table, and one row per line', () => {
		const a = timingJson(table());
		expect(timingJson(table())).toBe(a);
		expect(a.split('\n').filter((l) => l.startsWith('    {"instant"'))).toHaveLength(148);
		// A name holding the placeholder text does not disturb the rows.
		const odd = buildTimingTable(demoInput({ session: { ...demoInput().session, name: '"@rows@"' } }));
		expect(JSON.parse(timingJson(odd)).session.name).toBe('"@rows@"');
	});
});

/** Structural check against the OpenTimelineIO JSON schema as REFERENCES.md lists it. */
function checkOtio(node: unknown, path: string, problems: string[]): void {
	if (Array.isArray(node)) return node.forEach((n, i) => checkOtio(n, `${path}[${i}]`, problems));
	if (!node || typeof node !== 'object') return;
	const o = node as Record<string, unknown>;
	const need = (keys: string[]) => keys.forEach((k) => k in o || problems.push(`${path}: ${o.OTIO_SCHEMA} lacks ${k}`));
	switch (o.OTIO_SCHEMA) {
		case 'Timeline.1':
			need(['name', 'global_start_time', 'tracks', 'metadata']);
			break;
		case 'Stack.1':
		case 'Track.1':
			need(['children', 'name', 'source_range', 'effects', 'markers', 'enabled', 'metadata']);
			if (o.OTIO_SCHEMA === 'Track.1' && o.kind !== 'Video' && o.kind !== 'Audio') problems.push(`${path}: kind ${o.kind}`);
			break;
		case 'Clip.2':
			need(['source_range', 'media_references', 'active_media_reference_key', 'name', 'metadata']);
			break;
		case 'Gap.1':
			need(['source_range']);
			break;
		case 'ExternalReference.1':
			need(['target_url', 'available_range']);
			break;
		case 'TimeRange.1':
			need(['start_time', 'duration']);
			break;
		case 'RationalTime.1':
			if (typeof o.rate !== 'number' || !(o.rate > 0) || typeof o.value !== 'number' || !Number.isFinite(o.value)) problems.push(`${path}: bad RationalTime`);
			break;
		case 'Marker.2':
			need(['marked_range', 'name', 'color']);
			break;
		case undefined:
			break;
		default:
			problems.push(`${path}: unexpected schema ${o.OTIO_SCHEMA}`);
	}
	for (const [k, v] of Object.entries(o)) if (k !== 'metadata') checkOtio(v, `${path}.${k}`, problems);
}

describe('OpenTimelineIO', () => {
	it('has Timeline → Stack → one Track per camera with a Gap then the Clip at its offset', () => {
		const t: TimingTable = table();
		const doc = JSON.parse(timingOtio(t, demoRig()));
		const problems: string[] = [];
		checkOtio(doc, 'timeline', problems);
		expect(problems).toEqual([]);
		expect(doc.OTIO_SCHEMA).toBe('Timeline.1');
		expect(doc.tracks.OTIO_SCHEMA).toBe('Stack.1');
		const tracks = doc.tracks.children;
		expect(tracks.map((tr: { name: string }) => tr.name)).toEqual(['Rig high', 'Rig mid', 'Rig low, "housing"']);
		// The reference starts the timeline (earliest clip): no gap; mid's gap is its offset at 50 fps.
		expect(tracks[0].children.map((c: { OTIO_SCHEMA: string }) => c.OTIO_SCHEMA)).toEqual(['Clip.2']);
		const [gap, clip] = tracks[1].children;
		expect(gap.OTIO_SCHEMA).toBe('Gap.1');
		// 2.4995 s × 50 = 124.975 frames (computed).
		expect(gap.source_range.duration).toEqual({ OTIO_SCHEMA: 'RationalTime.1', rate: 50, value: 124.975 });
		expect(clip.source_range.duration.value).toBe(4100);
		expect(clip.media_references.DEFAULT_MEDIA.target_url).toBe('mid.mp4');
		expect(tracks[2].children[1].media_references.DEFAULT_MEDIA.target_url).toBe('low%2C%20housed.mp4');
		// 59.94 fps is 60000/1001 as a double (OTIO rates are doubles).
		expect(tracks[0].children[0].source_range.duration.rate).toBe(60000 / 1001);
		expect(tracks[2].children[0].source_range.duration.value / 30).toBeCloseTo(8.7989, 6);
		expect(doc.name).toMatch(/UNAPPROVED/);
		expect(doc.metadata.lockstep.notice).toMatch(/^UNAPPROVED/);
		const marker = doc.tracks.markers[0];
		expect(marker.marked_range.duration.value / marker.marked_range.duration.rate).toBeCloseTo(73.9, 6);
	});
});

describe('extraction script', () => {
	it('quotes any file name for sh', () => {
		const dir = mkdtempSync(join(tmpdir(), 'lockstep-quote-'));
		for (const name of ["it's here.mp4", '-rf $HOME `x`.mp4', 'a"b\\c.mp4']) {
			const out = execFileSync('sh', ['-c', `printf '%s' ${shellQuote(name)}`], { cwd: dir, encoding: 'utf8' });
			expect(out).toBe(name);
		}
	});

	it('collapses runs of frames into between() and escapes commas for the filtergraph', () => {
		expect(selectExpression([3, 7, 8, 9, 12])).toBe('eq(n\\,3)+between(n\\,7\\,9)+eq(n\\,12)');
	});

	it('is valid sh with one ffmpeg run per clip and the unapproved notice on top', () => {
		const text = extractionScript(table());
		const file = join(mkdtempSync(join(tmpdir(), 'lockstep-script-')), 'x.sh');
		writeFileSync(file, text);
		execFileSync('sh', ['-n', file]);
		expect(text.split('\n').slice(0, 4).join('\n')).toMatch(/# UNAPPROVED: revision 3/);
		expect(text.match(/^"\$FFMPEG" /gm)).toHaveLength(3);
		expect(text).toContain("'low, housed.mp4'");
		expect(text).toContain('-vsync 0');
		expect(extractionScript(approved())).not.toMatch(/UNAPPROVED/);
	});
});

describe('summary', () => {
	it('is one self-contained page naming the revision, with the notice when unapproved', () => {
		const html = timingSummary(table());
		expect(html).toMatch(/^<!doctype html>/);
		expect(html).toContain('UNAPPROVED: revision 3');
		expect(html).toContain('Rig low, &quot;housing&quot;');
		expect(html).not.toMatch(/<script|https?:\/\//);
		expect(timingSummary(approved())).toContain('Approved by a reviewer');
		expect(fileStem(table())).toBe('market-square-fountain-lap-2-r3-UNAPPROVED');
		expect(fileStem(approved())).toBe('market-square-fountain-lap-2-r3');
	});
});
