// What the scale dataset is, shared by the seed and the bench.

/** Pipeline codes of the scale dataset start with this; a second seed run and the bench recognise it by them. */
export const SCALE_CODE_PREFIX = 'SC-';
/** The tenant the scale dataset is added to: the demo's, so the demo people sign in straight into it. */
export const SCALE_TENANT_SLUG = 'bramblecote';
/** The database `npm run seed:scale` fills and `npm run bench` reads, in the cluster of `npm start`. */
export const SCALE_DATABASE = 'holdpoint_scale';
/** The gas monitor the dataset's readings were taken with; the bench bump-tests it before recording tests. */
export const SCALE_INSTRUMENT_SERIAL = 'SC-G4-0001';
