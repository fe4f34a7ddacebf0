import { error } from '@sveltejs/kit';
import { access } from '$lib/server/auth';
import { config } from '$lib/server/config';
import { receivedMail } from '$lib/server/mail-fake-reader';
import type { PageServerLoad } from './$types';

export const load = (async (event) => {
	await access(event, 'site');
	if (!config.demoMode) error(404, { message: 'The mail stand-in is only shown in demo mode.' });
	return { messages: await receivedMail() };
}) satisfies PageServerLoad;
