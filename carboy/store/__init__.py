"""The storeroom database (SQLite through sqlite-utils); knows nothing of the UI."""
