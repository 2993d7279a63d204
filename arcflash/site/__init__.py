"""Site data: the schema (pydantic), readers with line numbers, and the loader."""

from .loader import load_site

__all__ = ["load_site"]
