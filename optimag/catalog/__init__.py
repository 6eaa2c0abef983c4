"""Catalogue of cores, materials and wires: schema, loader and validation."""

from optimag.catalog.tables import (
    CORES,
    MATERIALS,
    TABLES,
    WIRES,
    Catalog,
    Column,
    Table,
    catalog_content_hash,
    check_catalog,
    load_catalog,
)

__all__ = [
    "CORES",
    "MATERIALS",
    "TABLES",
    "WIRES",
    "Catalog",
    "Column",
    "Table",
    "catalog_content_hash",
    "check_catalog",
    "load_catalog",
]
