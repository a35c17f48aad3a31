export {};
// Erases personal data of closed jobs past each shop's retention period (the server also does this daily).
// Usage: npm run task:retention   (DATABASE_URL as for the server)
process.env.RETENTION_TIMER = "0";
const { eraseExpiredPersonalData } = await import("../app/server/customers.server");
const result = await eraseExpiredPersonalData();
console.log(`Retention: ${result.jobsErased} jobs and ${result.customersErased} customers erased.`);
process.exit(0);
