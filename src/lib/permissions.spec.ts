import { describe, expect, it } from 'vitest';
import { can, PERMISSIONS, ROLE_NAMES } from './permissions';

// The role table of DESIGN.md ("People and roles") restated as cases.
describe('role rules', () => {
	it('lets every role read capture sessions', () => {
		for (const role of ROLE_NAMES) expect(can(role, 'sessions:read')).toBe(true);
	});

	it('gives each change to exactly the role DESIGN.md names', () => {
		expect(ROLE_NAMES.filter((r) => can(r, 'alignment:edit'))).toEqual(['editor']);
		expect(ROLE_NAMES.filter((r) => can(r, 'review:decide'))).toEqual(['reviewer']);
		expect(ROLE_NAMES.filter((r) => can(r, 'exports:create'))).toEqual(['processor']);
		expect(ROLE_NAMES.filter((r) => can(r, 'people:manage'))).toEqual(['admin']);
		expect(ROLE_NAMES.filter((r) => can(r, 'tokens:manage'))).toEqual(['admin']);
	});

	it('refuses everything to nobody', () => {
		for (const permission of Object.keys(PERMISSIONS) as (keyof typeof PERMISSIONS)[]) {
			expect(can(null, permission)).toBe(false);
		}
	});
});
