"""The problem itself: data model, formats, validation, precedence graph, plan checker, metrics."""
