import type { TimingTable } from '../timing-table';
import { decimal, instantsDescription, unapprovedNotice } from './common';

/*
 * A printable one-page HTML summary: what was exported, from which revision, how well the
 * cameras agree, and where each clip's usable span starts and ends. Self-contained (inline
 * style, no fonts or scripts fetched), A4 or Letter, no date inside: the revision dates it.
 */

const escape = (text: string) => text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
const POSITION_COLOURS = { high: '#d9a441', mid: '#2fae9f', low: '#b071d1', other: '#8a94a3' } as const;
const signed = (value: number, digits: number) => (value >= 0 ? '+' : '−') + decimal(Math.abs(value), digits);
const SAMPLE_ROWS = 8;

function placementSvg(table: TimingTable): string {
	const width = 640;
	const laneHeight = 18;
	const left = 120;
	const spans = table.clips.map((c) => {
		// Clip time 0 sits at the offset; the nominal length stretched by the clock's drift.
		const stretch = 1 + c.driftPpm * 1e-6;
		return { clip: c, start: c.offsetSeconds, end: c.offsetSeconds + (c.frameCount / c.frameRate.fps) * stretch };
	});
	const min = Math.min(0, ...spans.map((s) => s.start), table.usableSpan.startSeconds);
	const max = Math.max(...spans.map((s) => s.end), table.usableSpan.endSeconds);
	const x = (t: number) => left + ((t - min) / (max - min || 1)) * (width - left - 10);
	const height = spans.length * (laneHeight + 6) + 24;
	const lanes = spans
		.map((s, i) => {
			const y = 6 + i * (laneHeight + 6);
			return `<text x="0" y="${y + 13}" font-size="11">${escape(s.clip.label)}</text><rect x="${x(s.start).toFixed(1)}" y="${y}" width="${Math.max(1, x(s.end) - x(s.start)).toFixed(1)}" height="${laneHeight}" rx="3" fill="${POSITION_COLOURS[s.clip.position]}" opacity="0.85"/>`;
		})
		.join('');
	const us = x(table.usableSpan.startSeconds);
	const ue = x(table.usableSpan.endSeconds);
	const bottom = height - 18;
	return `<svg viewBox="0 0 ${width} ${height}" width="100%" role="img" aria-label="Clips on the session timeline with the usable span">
<rect x="${us.toFixed(1)}" y="0" width="${(ue - us).toFixed(1)}" height="${bottom}" fill="#2fae9f" opacity="0.12"/>
<line x1="${us.toFixed(1)}" x2="${us.toFixed(1)}" y1="0" y2="${bottom}" stroke="#1d7f74"/><line x1="${ue.toFixed(1)}" x2="${ue.toFixed(1)}" y1="0" y2="${bottom}" stroke="#1d7f74"/>
${lanes}
<text x="${us.toFixed(1)}" y="${height - 4}" font-size="10" text-anchor="middle">${decimal(table.usableSpan.startSeconds, 3)} s</text><text x="${ue.toFixed(1)}" y="${height - 4}" font-size="10" text-anchor="middle">${decimal(table.usableSpan.endSeconds, 3)} s</text>
</svg>`;
}

export function timingSummary(table: TimingTable): string {
	const notice = unapprovedNotice(table);
	const s = table.session;
	const span = table.usableSpan.endSeconds - table.usableSpan.startSeconds;
	const clipRows = table.clips
		.map(
			(c) => `<tr>
<td><span class="dot" style="background:${POSITION_COLOURS[c.position]}"></span>${escape(c.label)}${c.isReference ? ' <em>reference</em>' : ''}<br><span class="file">${escape(c.fileName)}</span></td>
<td class="n">${c.frameRate.num}/${c.frameRate.den}<br>${decimal(c.frameRate.fps, 3)} fps${c.variableFrameRate ? '<br>variable timing' : ''}</td>
<td class="n">${signed(c.offsetSeconds, 6)} s<br>${signed(c.driftPpm, 2)} ppm</td>
<td class="n">${decimal(c.usableSpan.startSeconds, 3)} – ${decimal(c.usableSpan.endSeconds, 3)} s</td>
<td class="n">${c.firstFrame ? `${c.firstFrame.index}<br>${c.firstFrame.timecode}` : '—'}</td>
<td class="n">${c.lastFrame ? `${c.lastFrame.index}<br>${c.lastFrame.timecode}` : '—'}</td>
</tr>`
		)
		.join('\n');
	const sample = table.rows.slice(0, SAMPLE_ROWS);
	const sampleRows = sample
		.map(
			(r) =>
				`<tr${r.flagged ? ' class="flag"' : ''}><td class="n">${r.index}</td><td class="n">${decimal(r.sessionSeconds, 3)}</td>${r.cells
					.map((cell) => `<td class="n">${cell ? `${cell.index} <small>${signed(cell.residualMs, 1)}</small>` : '—'}</td>`)
					.join('')}</tr>`
		)
		.join('\n');
	return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<title>${escape(s.name)} · timing table summary · revision ${s.revision}</title>
<style>
@page { size: auto; margin: 14mm; }
* { box-sizing: border-box; }
body { font: 10.5pt/1.4 Inter, "Helvetica Neue", Arial, sans-serif; color: #15171b; margin: 0 auto; max-width: 190mm; padding: 8mm 0; }
h1 { font-size: 17pt; margin: 0 0 2pt; letter-spacing: -0.01em; }
h2 { font-size: 10pt; text-transform: uppercase; letter-spacing: 0.06em; color: #525a67; margin: 14pt 0 5pt; }
.meta { color: #525a67; margin: 0; }
.n { font-family: "JetBrains Mono", ui-monospace, Menlo, monospace; font-variant-numeric: tabular-nums; font-size: 9pt; }
.banner { border: 1.5pt solid #f0603a; background: #fdebe5; padding: 6pt 9pt; margin: 10pt 0; font-weight: 600; }
.ok { border: 1pt solid #1f7a45; background: #e8f4ec; padding: 5pt 9pt; margin: 10pt 0; }
dl { display: grid; grid-template-columns: repeat(4, 1fr); gap: 6pt; margin: 0; }
dl div { border: 0.75pt solid #d5d9e0; border-radius: 4pt; padding: 5pt 7pt; }
dt { font-size: 8pt; color: #525a67; } dd { margin: 2pt 0 0; }
table { width: 100%; border-collapse: collapse; }
th { text-align: left; font-size: 8pt; color: #525a67; text-transform: uppercase; letter-spacing: 0.04em; border-bottom: 1pt solid #15171b; padding: 3pt 4pt; }
td { border-bottom: 0.5pt solid #d5d9e0; padding: 3pt 4pt; vertical-align: top; }
.file { color: #525a67; font-size: 8.5pt; }
.dot { display: inline-block; width: 6pt; height: 10pt; border-radius: 3pt; margin-right: 5pt; vertical-align: -1pt; }
tr.flag td { background: #fdebe5; }
small { color: #525a67; }
footer { margin-top: 12pt; font-size: 8pt; color: #525a67; }
</style>
</head>
<body>
<h1>${escape(s.name)}</h1>
<p class="meta">${escape(s.site || 'No site given')} · ${escape(s.captureDate ?? 'no date')} · revision ${s.revision} · ${escape(s.status.replace('_', ' '))}</p>
${notice ? `<p class="banner">${escape(notice)}</p>` : '<p class="ok">Approved by a reviewer at this revision.</p>'}
<dl>
<div><dt>Usable span (session time)</dt><dd class="n">${decimal(table.usableSpan.startSeconds, 3)} – ${decimal(table.usableSpan.endSeconds, 3)} s<br>${decimal(span, 3)} s long</dd></div>
<div><dt>Instants</dt><dd><span class="n">${table.summary.rowCount}</span><br><small>${escape(instantsDescription(table))}</small></dd></div>
<div><dt>Worst residual</dt><dd class="n">${table.summary.worstResidualMs === null ? '—' : `${decimal(table.summary.worstResidualMs, 3)} ms`}<br><small>mean |residual| ${table.summary.meanAbsResidualMs === null ? '—' : `${decimal(table.summary.meanAbsResidualMs, 3)} ms`}</small></dd></div>
<div><dt>Flagged rows</dt><dd class="n">${table.summary.flaggedCount}<br><small>above ${decimal(table.toleranceMs, 3)} ms (${escape(table.toleranceRule)})</small></dd></div>
</dl>
<h2>Clips on the session timeline</h2>
${placementSvg(table)}
<h2>Cameras</h2>
<table>
<thead><tr><th>Camera</th><th>Frame rate</th><th>Offset · drift</th><th>Usable span (clip time)</th><th>First frame</th><th>Last frame</th></tr></thead>
<tbody>
${clipRows}
</tbody>
</table>
<h2>First instants${table.rows.length > SAMPLE_ROWS ? ` (${SAMPLE_ROWS} of ${table.rows.length})` : ''}</h2>
<table>
<thead><tr><th>#</th><th>Session s</th>${table.clips.map((c) => `<th>${escape(c.label)} <small>frame · ms</small></th>`).join('')}</tr></thead>
<tbody>
${sampleRows}
</tbody>
</table>
<footer>Lockstep timing table · ${escape(s.name)} · revision ${s.revision} · sessionTime = offsetSeconds + clipTime × (1 + driftPpm × 1e-6) · residual = frame time − instant, in session time. The full table is in the CSV or JSON export of the same revision.</footer>
</body>
</html>
`;
}
