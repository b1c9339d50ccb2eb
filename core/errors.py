"""Errors whose message is meant for the evaluator: plain words, no traceback."""


class PlaincountError(Exception):
    """Base of every error whose ``str()`` can be shown to the evaluator as it is."""


class ProjectError(PlaincountError):
    """The project file cannot be opened or written."""


class ImportFailed(PlaincountError):
    """A source file cannot be read as a table."""


class CodebookError(PlaincountError):
    """A codebook or codebook change is not valid."""


class RuleError(PlaincountError):
    """A consistency rule does not parse or names an unknown variable."""


class TableError(PlaincountError):
    """A table cannot be made from this specification."""
