"""The base of every site-data model: unknown fields refused, numbers finite, yes/no never a number."""

from __future__ import annotations

from pydantic import BaseModel, ConfigDict, ValidationInfo, field_validator

from .slips import unit_slip


_set = object.__setattr__


class SiteModel(BaseModel):
    """Base of the site-data models.

    - unknown fields are errors; text is stripped;
    - ``inf`` and ``nan`` are refused where a number is read;
    - a YAML boolean (``yes``, ``no``, ``true``, ``on``, ``off`` unquoted) is refused where a number is read
      (it would be read as 1 or 0); in a field whose choices are 'on' and 'off' it is read as the word the
      user wrote (YAML 1.1 turns unquoted ``on``/``off`` into booleans);
    - a value plainly in the wrong unit (volts in a ``_kv`` field, inches in a ``_mm`` field) is refused with
      the value likely meant (:mod:`.slips`).
    """

    model_config = ConfigDict(extra="forbid", str_strip_whitespace=True, allow_inf_nan=False)

    def replaced(self, update=None):
        """A shallow copy with the fields of ``update`` set, unvalidated: what ``model_copy(update=update)``
        gives (the caller passes values of each field's type), made directly rather than by pydantic's
        generic copy (an uncertainty run makes hundreds of copies a sample)."""
        made = type(self).__new__(type(self))
        fields = self.__dict__.copy()
        if update:
            fields.update(update)
        _set(made, "__dict__", fields)
        _set(made, "__pydantic_fields_set__", self.__pydantic_fields_set__ | update.keys() if update
             else set(self.__pydantic_fields_set__))
        extra, private = self.__pydantic_extra__, self.__pydantic_private__
        _set(made, "__pydantic_extra__", None if extra is None else dict(extra))
        _set(made, "__pydantic_private__", None if private is None else dict(private))
        return made

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

    @field_validator("*", mode="after")
    @classmethod
    def _unit_slips(cls, value, info: ValidationInfo):
        if isinstance(value, float):
            name = "voltage_kv" if info.field_name == "kv" else info.field_name
            why = unit_slip(name, value)
            if why is not None:
                raise ValueError(why)
        return value


def field_error(field, expected):
    """A ValueError from a model check that the loader reports at ``field`` (a dotted path in the item).

    Checks that involve several fields run on the whole model, so pydantic reports them at the model; this
    names the field the user should mend, with its line and value.
    """
    return ValueError(f"{FIELD_MARK}{field}{FIELD_MARK} {expected}")


#: Marks the field named at the start of a model check's message (see :func:`field_error`).
FIELD_MARK = "\u00a7"
