import { z } from 'zod';
import { role } from './schema';

// What comes in for the group-to-role mapping (the administrator's forms). Unknown fields are refused.

const unknownFields = (iss: { code?: string; keys?: string[] }) =>
	iss.code === 'unrecognized_keys'
		? `Unknown field${iss.keys!.length > 1 ? 's' : ''}: ${iss.keys!.join(', ')}.`
		: undefined;

export const groupName = z
	.string({ error: 'Enter the group as the identity provider names it.' })
	.trim()
	.min(1, 'Enter the group as the identity provider names it.')
	.max(200, 'A group name has at most 200 characters.')
	.refine((g) => ![...g].some((c) => c.charCodeAt(0) < 0x20 || c.charCodeAt(0) === 0x7f), {
		message: 'A group name cannot contain control characters.'
	});

const mappingId = z.coerce.number({ error: 'Missing mapping.' }).int().positive('Missing mapping.');

export const addGroupRoleForm = z.strictObject({ group: groupName, role }, { error: unknownFields });
export const setGroupRoleForm = z.strictObject({ id: mappingId, role }, { error: unknownFields });
export const removeGroupRoleForm = z.strictObject({ id: mappingId }, { error: unknownFields });
