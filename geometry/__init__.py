"""airbias geometry package."""
