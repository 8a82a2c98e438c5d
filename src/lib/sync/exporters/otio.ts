import { framesOfTimecode } from '../timecode';
import { frameTimeSeconds, sessionTimeOf, type FrameTiming } from '../frames';
import type { TimingTable, TableClipInput } from '../timing-table';
import { TIME_FORMULA, unapprovedNotice } from './common';

/*
 * OpenTimelineIO JSON (Academy Software Foundation schema): Timeline.1 → Stack.1 → one
 * Track.1 per camera holding a Gap.1 then the whole clip as Clip.2, so every clip starts at its
 * offset. Times are RationalTime.1 at each camera's own rate; the timeline's zero is the
 * earliest clip start, its rate the reference camera's. Drift is not applied as a time warp
 * (editors would resample the picture): it is in each track's metadata, with the offset.
 */

interface RationalTime {
	OTIO_SCHEMA: 'RationalTime.1';
	rate: number;
	value: number;
}

const time = (value: number, rate: number): RationalTime => ({ OTIO_SCHEMA: 'RationalTime.1', rate, value: clean(value) });
const range = (start: number, duration: number, rate: number) => ({
	OTIO_SCHEMA: 'TimeRange.1',
	duration: time(duration, rate),
	start_time: time(start, rate)
});
// Values to a millionth of a frame: stable text for the same table.
const clean = (value: number) => {
	const rounded = Math.round(value * 1e6) / 1e6;
	return Object.is(rounded, -0) ? 0 : rounded;
};

function mediaExtent(frames: FrameTiming, rateValue: number): { firstSeconds: number; frameSlots: number } {
	if (frames.kind === 'constant') return { firstSeconds: frames.firstFrameSeconds, frameSlots: frames.frameCount };
	const times = frames.frameTimesSeconds;
	const first = times[0];
	const last = times[times.length - 1];
	return { firstSeconds: first, frameSlots: Math.round((last - first) * rateValue) + 1 };
}

export function timingOtio(table: TimingTable, inputs: TableClipInput[]): string {
	const byId = new Map(inputs.map((c) => [c.id, c]));
	const placed = table.clips.map((clip) => {
		const input = byId.get(clip.id)!;
		const rate = clip.frameRate.fps;
		const extent = mediaExtent(input.frames, rate);
		const startSession = sessionTimeOf(frameTimeSeconds(0, input.frames), input.placement);
		return { clip, input, rate, extent, startSession };
	});
	const zero = Math.min(...placed.map((p) => p.startSession));
	const timelineRate = (placed.find((p) => p.clip.isReference) ?? placed[0]).rate;
	const notice = unapprovedNotice(table);

	const tracks = placed.map(({ clip, rate, extent, startSession }) => {
		const startFrames = (framesOfTimecode(clip.startTimecode, clip.frameRate) ?? 0) + extent.firstSeconds * rate;
		const available = range(startFrames, extent.frameSlots, rate);
		const gapSeconds = startSession - zero;
		const children: object[] = [];
		if (gapSeconds > 0) {
			children.push({
				OTIO_SCHEMA: 'Gap.1',
				metadata: {},
				name: '',
				source_range: range(0, gapSeconds * rate, rate),
				effects: [],
				markers: [],
				enabled: true
			});
		}
		children.push({
			OTIO_SCHEMA: 'Clip.2',
			metadata: { lockstep: { cameraKey: clip.key, clipId: clip.id } },
			name: clip.fileName,
			source_range: available,
			effects: [],
			markers: [],
			enabled: true,
			media_references: {
				DEFAULT_MEDIA: {
					OTIO_SCHEMA: 'ExternalReference.1',
					metadata: {},
					name: clip.fileName,
					available_range: available,
					available_image_bounds: null,
					target_url: encodeURIComponent(clip.fileName)
				}
			},
			active_media_reference_key: 'DEFAULT_MEDIA'
		});
		return {
			OTIO_SCHEMA: 'Track.1',
			metadata: {
				lockstep: {
					cameraKey: clip.key,
					position: clip.position,
					reference: clip.isReference,
					offsetSeconds: clip.offsetSeconds,
					driftPpm: clip.driftPpm,
					frameRate: `${clip.frameRate.num}/${clip.frameRate.den}`,
					variableFrameRate: clip.variableFrameRate,
					usableSpanClipSeconds: { start: clip.usableSpan.startSeconds, end: clip.usableSpan.endSeconds }
				}
			},
			name: clip.label,
			source_range: null,
			effects: [],
			markers: [],
			enabled: true,
			kind: 'Video',
			children
		};
	});

	const usable = {
		OTIO_SCHEMA: 'Marker.2',
		metadata: { lockstep: { sessionSeconds: { start: table.usableSpan.startSeconds, end: table.usableSpan.endSeconds } } },
		name: 'Usable span',
		color: 'GREEN',
		marked_range: range((table.usableSpan.startSeconds - zero) * timelineRate, (table.usableSpan.endSeconds - table.usableSpan.startSeconds) * timelineRate, timelineRate),
		comment: 'Where every exported camera is rolling and the editor marked the capture usable.'
	};

	const timeline = {
		OTIO_SCHEMA: 'Timeline.1',
		metadata: {
			lockstep: {
				approval: table.approved ? 'approved' : 'unapproved',
				notice,
				session: { id: table.session.id, name: table.session.name, revision: table.session.revision, status: table.session.status },
				formula: TIME_FORMULA,
				sessionSecondsAtTimelineZero: clean(zero)
			}
		},
		name: `${table.session.name} · revision ${table.session.revision}${table.approved ? '' : ' (UNAPPROVED)'}`,
		global_start_time: time(0, timelineRate),
		tracks: {
			OTIO_SCHEMA: 'Stack.1',
			metadata: {},
			name: 'Cameras',
			source_range: null,
			effects: [],
			markers: [usable],
			enabled: true,
			children: tracks
		}
	};
	return JSON.stringify(timeline, null, 2) + '\n';
}
