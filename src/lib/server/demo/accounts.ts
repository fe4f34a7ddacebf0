import type { Role } from '../identity/roles';

// Demo mode only: the accounts of the invented VX7 scenario (documented in the README).
export const DEMO_PASSWORD = 'loopwarden-demo';

export const DEMO_ACCOUNTS: { email: string; name: string; role: Role | null; admin: boolean }[] = [
	{ email: 'admin@demo.loopwarden.test', name: 'Ada Okonkwo', role: null, admin: true },
	{ email: 'engineer@demo.loopwarden.test', name: 'Emil Varga', role: 'engineer', admin: false },
	{ email: 'analyst@demo.loopwarden.test', name: 'Anaïs Brandt', role: 'analyst', admin: false },
	{ email: 'certifier@demo.loopwarden.test', name: 'Chidi Laurent', role: 'certifier', admin: false },
	{ email: 'manager@demo.loopwarden.test', name: 'Maren Sørli', role: 'viewer', admin: false }
];

export const DEMO_PROJECT = {
	key: 'VX7',
	name: 'Tilt-wing air taxi',
	description:
		'An invented four-seat electric tilt-wing air taxi: elevon and wing-tilt actuators, propeller speed governors, ' +
		'the battery DC-link converter and the yaw damper, each a loop with a nonlinear element to keep absolutely stable.'
};
