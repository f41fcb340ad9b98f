"""Tables: plan, compute, cross-check and write; the default catalogue."""
