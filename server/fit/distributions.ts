/** The distributions live in shared/ so that the client draws with the same functions the engine computes with. */
export * from '@shared/stats/distributions';
