"""The domain model: what was read (`blend`) and what was found (`formula`)."""
