"""Package data of calendra (the gazetteer of historical sites)."""
