// Ids that come from URLs and forms are checked before they reach a uuid column, so a mangled one is a 404, not a database error.

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

export const isUuid = (value: string | null | undefined): value is string => !!value && UUID.test(value);
