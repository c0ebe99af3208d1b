// CSV text for the downloads (peaks tables, the ledger export): one place for the quoting and line-end rules.
import { stringify } from "csv-stringify/sync";

/** A CSV field: null and undefined are written as an empty field, numbers in JavaScript's own string form. */
export type CsvField = string | number | null | undefined;

/**
 * Rows as CSV text, each ended by CRLF (RFC 4180, which spreadsheets expect). A field is quoted when it
 * holds a comma, a double quote (doubled inside), a CR or an LF. Without quote_record_delimiter a lone
 * LF inside a field would go out unquoted, since the record delimiter is the CRLF pair.
 */
export function csvText(rows: readonly (readonly CsvField[])[]): string {
  return stringify(rows as CsvField[][], { record_delimiter: "\r\n", quote_record_delimiter: true });
}
