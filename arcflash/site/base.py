"""The base of every site-data model: unknown fields refused, numbers finite, yes/no never a number."""

from __future__ import annotations

from pydantic import BaseModel, ConfigDict, ValidationInfo, field_validator


class SiteModel(BaseModel):
    """Base of the site-data models.

    - unknown fields are errors; text is stripped;
    - ``inf`` and ``nan`` are refused where a number is read;
    - a YAML boolean (``yes``, ``no``, ``true``, ``on``, ``off`` unquoted) is refused where a number is read
      (it would be read as 1 or 0); in a field whose choices are 'on' and 'off' it is read as the word the
      user wrote (YAML 1.1 turns unquoted ``on``/``off`` into booleans).
    """

    model_config = ConfigDict(extra="forbid", str_strip_whitespace=True, allow_inf_nan=False)

    @field_validator("*", mode="before")
    @classmethod
    def _booleans(cls, value, info: ValidationInfo):
        if not isinstance(value, bool):
            return value
        annotation = repr(cls.model_fields[info.field_name].annotation)
        if "'on'" in annotation and "'off'" in annotation:
            return "on" if value else "off"
        if "bool" in annotation:
            return value
        if "float" in annotation or "int" in annotation:
            raise ValueError("a number, not yes/no, true/false or on/off")
        return value
