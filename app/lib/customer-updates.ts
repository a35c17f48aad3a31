// The status e-mails a shop may choose to send a customer (the quote goes with its own e-mail when sent).
export const STATUS_UPDATES = ["received", "ready"] as const;
export type StatusUpdate = (typeof STATUS_UPDATES)[number];
export const STATUS_UPDATE_LABELS: Record<StatusUpdate, string> = {
  received: "Device received",
  ready: "Ready for pickup",
};

// Intake photos: how many and how large.
export const PHOTO_MAX_BYTES = 8 * 1024 * 1024;
export const PHOTO_MAX_FILES = 6;
