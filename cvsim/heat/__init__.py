"""Heat paths of a vessel: inside geometry (``geometry``) and heat terms on its gas."""
