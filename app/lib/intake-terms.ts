// The terms the customer acknowledges at intake. The wording is the shop's promise, kept in one place so the
// intake form, the printed receipt and the export say the same thing. How long an unclaimed device is kept is
// the shop's setting, recorded on each job at intake so its receipt keeps the promise the customer accepted.

/** What jobs taken in before shops chose their own period were promised. */
export const DEFAULT_UNCLAIMED_DAYS = 60;

export function intakeTerms(shopName: string, unclaimedDays: number = DEFAULT_UNCLAIMED_DAYS): string[] {
  return [
    "Board-level repair can erase or lose the data on the device. Back up what you need; " +
      `${shopName} is not responsible for lost data.`,
    `A device not collected within ${unclaimedDays} days of our "ready" or "returned" notice may be recycled ` +
      "or sold to cover the charges owed.",
    "The agreed diagnostic fee is charged whether or not you approve the repair quote.",
  ];
}
