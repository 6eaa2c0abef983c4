"""Catalogue of cores, materials and wires: schema, loader and validation."""

from optimag.catalog.loader import Catalog, catalog_content_hash, check_catalog, load_catalog
from optimag.catalog.schema import CORES, MATERIALS, TABLES, WIRES, Column, Table

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
