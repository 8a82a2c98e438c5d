import type { TimingTable } from '../timing-table';
import { fileStem, instantsDescription, unapprovedNotice } from './common';

/*
 * A POSIX shell script that cuts exactly the listed frames of each clip with ffmpeg: one
 * decoding pass per clip, a `select` filter on the frame index `n` (presentation order, the
 * index the table gives), `-vsync 0` so no frame is duplicated or dropped (accepted by ffmpeg
 * 4.1 and 5.1 alike), then each numbered image renamed to its frame number.
 */

/** Single-quoted for sh: safe for spaces, quotes, $, backslashes and leading dashes. */
export function shellQuote(text: string): string {
	return `'${text.replace(/'/g, `'\\''`)}'`;
}

/** Text for a '#' comment line: no line breaks or control characters. */
const comment = (text: string) => text.replace(/[\u0000-\u001f\u007f]+/g, ' ');

/**
 * The select expression for sorted, distinct frame numbers: consecutive runs collapse to
 * between(n,a,b). Commas are escaped for the filtergraph.
 */
export function selectExpression(frames: number[]): string {
	const terms: string[] = [];
	for (let i = 0; i < frames.length; ) {
		let j = i;
		while (j + 1 < frames.length && frames[j + 1] === frames[j] + 1) j++;
		terms.push(j > i ? `between(n\\,${frames[i]}\\,${frames[j]})` : `eq(n\\,${frames[i]})`);
		i = j + 1;
	}
	return terms.join('+');
}

/** Each camera's distinct frames in the table, ascending. */
export function framesPerCamera(table: TimingTable): number[][] {
	return table.clips.map((_, c) => [...new Set(table.rows.flatMap((row) => (row.cells[c] ? [row.cells[c].index] : [])))].sort((a, b) => a - b));
}

const CHUNK = 400;

export function extractionScript(table: TimingTable): string {
	const notice = unapprovedNotice(table);
	const perCamera = framesPerCamera(table);
	const lines: string[] = [
		'#!/bin/sh',
		'# Lockstep frame extraction',
		`# Capture session: ${comment(table.session.name)} (revision ${table.session.revision}, ${table.session.status})`,
		...(notice ? [`# ${notice}`] : []),
		`# Instants: ${table.rows.length}, ${instantsDescription(table)}; images are named <camera>_<frame>.png`,
		'# with the frame numbers of the timing table (0-based, presentation order).',
		'#',
		'# Usage: sh this-script.sh [MEDIA_DIR] [OUT_DIR]',
		'#   MEDIA_DIR  folder holding the original clips (default: the current folder)',
		'#   OUT_DIR    where the images go, one folder per camera',
		'#   FFMPEG     the ffmpeg to run (default: ffmpeg; 4.1 or later)',
		'# One decoding pass per clip: a select filter keeps the listed frames, -vsync 0 passes',
		'# them through unchanged, then the numbered images are renamed to their frame numbers.',
		'set -eu',
		'MEDIA_DIR=${1:-.}',
		`OUT_DIR=\${2:-${shellQuote(`frames-${fileStem(table)}`)}}`,
		'FFMPEG=${FFMPEG:-ffmpeg}',
		'command -v "$FFMPEG" >/dev/null 2>&1 || { echo "extract: $FFMPEG not found: install ffmpeg or set FFMPEG" >&2; exit 1; }',
		'',
		'# place DIR KEY FIRST FRAME...: ffmpeg numbered the images 1, 2, …; give each its frame number.',
		'place() {',
		'\tdir=$1; key=$2; i=$3; shift 3',
		'\tfor frame in "$@"; do',
		'\t\tsrc=$(printf \'%s/.lockstep-%06d.png\' "$dir" "$i")',
		'\t\tif [ ! -f "$src" ]; then echo "extract: $key: image $i is missing (the clip has fewer frames than the table lists)" >&2; exit 1; fi',
		'\t\tmv -f "$src" "$(printf \'%s/%s_%06d.png\' "$dir" "$key" "$frame")"',
		'\t\ti=$((i + 1))',
		'\tdone',
		'}',
		''
	];
	table.clips.forEach((clip, c) => {
		const frames = perCamera[c];
		if (frames.length === 0) return;
		const dir = `"$OUT_DIR"/${shellQuote(clip.key)}`;
		lines.push(
			`# ${comment(clip.label)} (${clip.position}): ${comment(clip.fileName)}, ${clip.frameRate.num}/${clip.frameRate.den} fps${clip.variableFrameRate ? ' nominal, variable timing' : ''}, ${frames.length} frames`,
			`mkdir -p ${dir}`,
			`cat > ${dir}/.lockstep-select <<'LOCKSTEP_SELECT'`,
			`select='${selectExpression(frames)}'`,
			'LOCKSTEP_SELECT',
			`"$FFMPEG" -hide_banner -loglevel error -nostdin -y -i "file:$MEDIA_DIR/"${shellQuote(clip.fileName)} -map 0:v:0 -an -sn -dn \\`,
			`\t-filter_script:v ${dir}/.lockstep-select -vsync 0 -frames:v ${frames.length} -start_number 1 "file:$OUT_DIR/"${shellQuote(clip.key)}/.lockstep-%06d.png`
		);
		for (let start = 0; start < frames.length; start += CHUNK) {
			lines.push(`place ${dir} ${shellQuote(clip.key)} ${start + 1} ${frames.slice(start, start + CHUNK).join(' ')}`);
		}
		lines.push(`rm -f ${dir}/.lockstep-select`, `echo "${clip.key}: ${frames.length} images"`, '');
	});
	lines.push('echo "done: images in $OUT_DIR"');
	return lines.join('\n') + '\n';
}
