/** What scripts/test.sh exports for the tests; checked here so a missing variable fails loudly. */
export function testConfig() {
  const required = (name: string): string => {
    const value = process.env[name];
    if (!value) throw new Error(`${name} is not set: run the tests with npm test`);
    return value;
  };
  const port = Number(process.env.TEST_PORT ?? 3100);
  return {
    port,
    /** Tests talk to the server on the address it listens on. */
    baseUrl: `http://127.0.0.1:${port}`,
    /** What the app puts in mailed links (APP_URL). */
    appUrl: required('APP_URL'),
    databaseUrl: required('DATABASE_URL'),
    mailDir: required('DEV_MAIL_DIR'),
    demoPassword: process.env.DEMO_PASSWORD || 'asterism-demo',
  };
}
