"""The rule engine: rule and profile files, the expression language, derivation and evaluation."""
