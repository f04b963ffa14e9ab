/** Moved to shared/report/plots.ts (the server's PDF renders the same options); re-exported for the client's imports. */
export * from '../../../shared/report/plots';
