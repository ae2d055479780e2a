"""Settings for the test suite: SQLite in memory unless DATABASE_URL is set."""

from durability.settings.base import *  # noqa: F403
from durability.settings.base import DATABASES

SECRET_KEY = "test-only-key-" + "t" * 40
DEBUG = False
ALLOWED_HOSTS = ["testserver", "127.0.0.1", "localhost"]
PASSWORD_HASHERS = ["django.contrib.auth.hashers.MD5PasswordHasher"]
LAB_NAME = "Test Lab"
LAB_ADDRESS = "1 Test Street, Testville"
REPORT_VERIFY_BASE_URL = "http://testserver"

if str(DATABASES["default"]["ENGINE"]).endswith("sqlite3"):
    DATABASES["default"]["TEST"] = {"NAME": ":memory:"}
