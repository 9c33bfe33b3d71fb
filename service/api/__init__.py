"""The HTTP layer: one blueprint per capability, thin views over service.physics."""
