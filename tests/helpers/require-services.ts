// API and E2E tests need the database cluster and mail catcher that `npm test` (tests/run.ts) starts.
if (!process.env.TEST_ADMIN_URL || !process.env.TEST_TEMPLATE_DB) {
  throw new Error('Run API and E2E tests through `npm test` (or `npm run test:api` / `npm run test:e2e`), which start PostgreSQL and the mail catcher.');
}
