"""proof subpackage."""
