"""The SQLite write lock taken by `Database.transaction(immediate=True)` ends with that
transaction: the pooled connection it used begins deferred transactions again afterwards."""

import sqlite3

import pytest


def test_immediate_flag_does_not_leak_to_the_next_borrower(database):
    with database.transaction(immediate=True) as s:
        s.connection().exec_driver_sql("SELECT 1")
    reader = database.session()
    reader.connection().exec_driver_sql("SELECT count(*) FROM unit").scalar()
    try:
        # another connection can still take the write lock while that reader is open;
        # with a leaked flag the reader would hold BEGIN IMMEDIATE and this would fail
        other = sqlite3.connect(database.engine.url.database, timeout=0.5)
        other.execute("BEGIN IMMEDIATE")
        other.execute("ROLLBACK")
        other.close()
    finally:
        reader.close()


def test_immediate_transactions_queue_rather_than_interleave(database):
    with database.transaction(immediate=True) as s:
        s.connection()  # the transaction begins, and with it the lock
        other = sqlite3.connect(database.engine.url.database, timeout=0.2)
        with pytest.raises(sqlite3.OperationalError, match="locked"):
            other.execute("BEGIN IMMEDIATE")
        other.close()
