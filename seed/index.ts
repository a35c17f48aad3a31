export {};
// `npm run seed`: migrate and seed the demo shop into DATABASE_URL, then exit.
process.env.SEED_DEMO = "1";
const { client } = await import("../app/server/db.server");
client.close();
console.log("Demo shop ready: Harbor Bench Repair (see README for the sign-ins).");
