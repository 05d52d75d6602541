"""Files in and out: the site file (JSON, its schema, migration of older versions, atomic
save), measured-record readers and their checks (:mod:`~engine.io.record_checks`: timestamps,
date order, direction units), the dashboard's autosave, formula-safe CSV, and the shared safe
file and text handling (:mod:`~engine.io.safe_files`: bounded reads refusing special files,
checked atomic writes, text-field rules).

Second in the chain, above :mod:`engine.core`: it turns bytes into validated dataclasses and
arrays and back, and holds no physics.
"""
from engine.io import autosave, exports, migrate, record_checks, records, safe_files, sitefile
from engine.io.exports import safe_csv
from engine.io.records import Record, read_record
from engine.io.sitefile import atomic_write_bytes, content_hash, json_schema, load, loads, save

__all__ = ["autosave", "exports", "migrate", "record_checks", "records", "safe_files",
           "sitefile", "safe_csv", "Record",
           "read_record", "atomic_write_bytes", "content_hash", "json_schema", "load", "loads",
           "save"]
