"""Reading and writing files: scenarios, measurements, tracks, planet files, maps, tables, mission data; writes are atomic."""
