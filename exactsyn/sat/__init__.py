"""sat subpackage."""
