"""Pure numerical and data core.

Nothing under this package imports an HTTP framework, a serialisation library,
pint or a logger: values are plain SI floats and results are frozen dataclasses.
"""
