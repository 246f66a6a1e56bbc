"""airbias solver package."""
