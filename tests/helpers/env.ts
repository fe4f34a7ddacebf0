// What scripts/test.sh set up for this run.
function need(name: string): string {
	const v = process.env[name];
	if (!v) throw new Error(`${name} is not set: run the tests through npm test (scripts/test.sh)`);
	return v;
}

export const env = {
	get baseUrl() {
		return need('LW_BASE_URL');
	},
	get databaseUrl() {
		return need('DATABASE_URL');
	},
	get mailDir() {
		return need('MAIL_FAKE_DIR');
	},
	get testData() {
		return need('LW_TEST_DATA');
	}
};
