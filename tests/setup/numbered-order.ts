// Orders inserted by tests that write rows directly, numbered as the app numbers them.
/**
 * SQL that inserts an order for a test that writes rows directly with the number the app would give it: the client organisation's
 * prefix (parameter $3 is its id), the year and the next value of its counter (docs/design.md#order-numbers).
 * `columns` and `values` are the order's other columns and their SQL values.
 */
export function numberedOrderInsert(columns: string, values: string): string {
  return `with n as (insert into order_number_counters (organisation_id, year, last_seq) values ($3, extract(year from now() at time zone 'utc')::int, 1)
      on conflict (organisation_id, year) do update set last_seq = order_number_counters.last_seq + 1 returning last_seq, year),
    p as (select order_prefix from organisations where id = $3)
    insert into orders (${columns}, number) select ${values}, p.order_prefix || '-' || n.year || '-' || lpad(n.last_seq::text, 4, '0') from n, p returning id`;
}
