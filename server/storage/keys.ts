/**
 * Keys of a section's files in the file store. Kept apart from the jobs that
 * write them so services and report code can name the files without
 * importing the job queue.
 */
export const sectionKeys = (storageKey: string) => ({
  root: `sections/${storageKey}`,
  original: `sections/${storageKey}/original`,
  pyramid: `sections/${storageKey}/pyramid`,
});
