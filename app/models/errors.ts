// Errors any model may raise that the HTTP layer answers the same way wherever they come from.

/**
 * A row the caller named does not exist or is not theirs. Models raise it instead of building an HTTP answer;
 * the route answers 404 with the message (orNotFound, with the other access guards in app/utils).
 */
export class NoSuchRecord extends Error {}
