/** Moved to shared/format.ts (the server's reports use the same wording); re-exported for the client's imports. */
export * from '../../../shared/format';
