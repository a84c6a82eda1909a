"""The public data contract: every input field and result column declared once, and the rules for raw values.

CSV column names, JSON keys and flag codes defined here are public: engineers'
spreadsheets and scripts depend on them. Extend, never rename.

* :mod:`.fields` - the declaration (name, unit, range, required-ness, text rules, help);
* :mod:`.cells` - what a raw value may look like, as a CSV cell or a JSON value (``parse_value``,
  ``parse_column``);
* :mod:`.models` - the API's request models (pydantic), built from the declaration;
* :mod:`.responses` - the API's response models (pydantic), built from the declaration;
* :mod:`.page` - the declaration as the page reads it (``static/fields.json``).
"""

from .cells import (AMBIGUOUS_PATTERN, NUMBER_PATTERN, TRIM_CHARS, distinct_values, is_blank, parse_choice,
                    parse_column, parse_number, parse_text, parse_value, trim)
from .errors import FieldError
from .fields import *  # noqa: F401,F403  (every declared name stays importable from slipwise.contract)
from .fields import __all__ as _field_names

__all__ = ["AMBIGUOUS_PATTERN", "FieldError", "NUMBER_PATTERN", "TRIM_CHARS", "distinct_values", "is_blank",
           "parse_choice", "parse_column", "parse_number", "parse_text", "parse_value", "trim", *_field_names]
