"""Heat paths of a vessel: inside geometry (``geometry``); walls and heat transfer to come."""
