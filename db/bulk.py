"""Many rows into one table in the caller's transaction, by the fastest path each backend offers."""

from __future__ import annotations


def bulk_insert(conn, table, rows: list[dict]) -> None:
    """Insert many rows into the Core ``table`` in the caller's transaction (``conn``: Connection or Session).

    On PostgreSQL through psycopg, rows that give every column (an autoincrement id aside) go in with ``COPY``,
    about three times faster than ``executemany`` for 10⁵ breakdown points (tests/bench/bench_pg_import.py);
    elsewhere, or when columns are left to their defaults, this is a plain ``executemany``.
    """
    from sqlalchemy import insert

    if not rows:
        return
    if hasattr(conn, "connection") and not hasattr(conn, "dialect"):  # a Session: use its connection
        conn = conn.connection()
    cols = list(rows[0])
    needed = {c.name for c in table.columns if c is not table.autoincrement_column}
    if conn.dialect.name == "postgresql" and conn.dialect.driver == "psycopg" and needed <= set(cols):
        q = conn.dialect.identifier_preparer
        sql = f"COPY {q.format_table(table)} ({', '.join(q.quote(c) for c in cols)}) FROM STDIN"
        with conn.connection.driver_connection.cursor() as cur, cur.copy(sql) as copy:
            for r in rows:
                copy.write_row([r[c] for c in cols])
        return
    conn.execute(insert(table), rows)


def insert_rows(session, table, columns: tuple[str, ...], rows) -> None:
    """Insert many rows (tuples in ``columns`` order) with one executemany in the session's transaction.

    On SQLite the statement goes straight to the driver, which is as fast as bare ``sqlite3`` (the ORM and Core
    bulk paths spend 1.5–3.5× as long converting 10⁵ rows); other backends take :func:`bulk_insert`
    (COPY on PostgreSQL).
    """
    conn = session.connection()
    if conn.dialect.name == "sqlite":
        sql = f"INSERT INTO {table.name} ({', '.join(columns)}) VALUES ({', '.join('?' * len(columns))})"
        conn.exec_driver_sql(sql, list(rows))
    else:
        bulk_insert(conn, table, [dict(zip(columns, r, strict=True)) for r in rows])
