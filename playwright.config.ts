import { defineConfig } from '@playwright/test';

// Run through `npm test` (scripts/test.mjs), which starts PostgreSQL, the fake SMTP and
// fake shops and sets the environment this file reads.
const port = Number(process.env.PORT || 4400);
const origin = process.env.ORIGIN || `http://127.0.0.1:${port}`;

export default defineConfig({
	testDir: 'tests/e2e',
	outputDir: 'tests/artifacts/playwright',
	fullyParallel: false,
	workers: 1,
	retries: 0,
	timeout: 60_000,
	expect: { timeout: 10_000 },
	reporter: [['list'], ['json']],
	use: {
		baseURL: origin,
		trace: 'retain-on-failure',
		screenshot: 'only-on-failure',
		launchOptions: {
			executablePath: '/usr/bin/chromium',
			args: [
				'--headless',
				'--no-sandbox',
				'--disable-gpu',
				'--disable-quic',
				'--no-first-run',
				'--disable-background-networking',
				'--disable-component-update',
				'--disable-sync'
			]
		}
	},
	webServer: {
		command: `node scripts/serve.mjs ${process.env.SG_BUILD_DIR || 'build'}`,
		url: `${origin}/`,
		reuseExistingServer: false,
		timeout: 60_000,
		stdout: 'pipe',
		env: { ...(process.env as Record<string, string>), PORT: String(port), HOST: '127.0.0.1', ORIGIN: origin }
	}
});
