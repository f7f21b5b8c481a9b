#!/usr/bin/python3
"""Makes the binary storage fixtures with Python's own sqlite3 module (an implementation of the file
format independent of Spinward's code). Run from this folder: /usr/bin/python3 make_fixtures.py

newer_version.db  a sound database whose PRAGMA user_version (99) is newer than any Spinward schema.
damaged.db        a sound database with bytes in the middle of a table's b-tree page overwritten, so
                  PRAGMA quick_check reports corruption (SQLite file format: a page's header and
                  cell pointer array lie at its start; zeroing them breaks the b-tree).
not_a_database.db text, not an SQLite file at all (written by hand, not by this script).
"""
import os
import sqlite3

PAGE = 4096


def make(path, rows, user_version):
    if os.path.exists(path):
        os.remove(path)
    con = sqlite3.connect(path)
    con.execute(f"PRAGMA page_size = {PAGE}")
    con.execute("CREATE TABLE readings (station TEXT, value REAL)")
    con.executemany("INSERT INTO readings VALUES (?, ?)",
                    [(f"Larkfield P-10{i % 3}", i * 0.25) for i in range(rows)])
    con.execute(f"PRAGMA user_version = {user_version}")
    con.commit()
    con.close()


make("newer_version.db", 10, 99)
make("damaged.db", 2000, 2)
with open("damaged.db", "r+b") as f:
    f.seek(3 * PAGE)          # page 4: a page of the readings table's b-tree
    f.write(b"\xff" * 64)     # overwrite its page header and first cell pointers
con = sqlite3.connect("damaged.db")
try:
    print("damaged.db quick_check:", con.execute("PRAGMA quick_check").fetchone())
except sqlite3.DatabaseError as error:
    print("damaged.db quick_check fails:", error)
con.close()
