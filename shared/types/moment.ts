/**
 * How the answer types hold a moment: a Date where the server reads it from PostgreSQL, an ISO
 * string once it has crossed the wire as JSON (JSON.stringify writes a Date as that string). Row
 * types take it as a parameter defaulting to the string, so the server names `Row<Date>` and the
 * client plain `Row`, and both mean one declaration.
 */
export type Moment = string | Date;
