"""airbias calib package."""
