// Evidence, by act (each module owns its rules and transactions and calls repo.ts):
//   submit.ts            upload a new item, revise an item (both store through revision.ts storeRevision)
//   revision.ts          receiving the multipart body, the object's clean-up, the one revision writer
//   review.ts            a certifier's accept / reject of the current revision
//   read.ts              an item, the list, a stored file, the history
//   integrity.ts         SHA-256 of the stored object against the recorded one
//   tolerance.ts         model-vs-test tolerance per requirement
//   compare-measured.ts  measured frequency response vs specification and model
// Callers import from here.
export * from './compare-measured';
export * from './integrity';
export * from './read';
export { submittedFields, type ProjectRef, type UploadInput, type UploadResult } from './revision';
export * from './review';
export * from './submit';
export * from './tolerance';
