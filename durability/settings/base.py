"""Settings shared by every environment. Differences come from the environment."""

from pathlib import Path

from durability.settings.env import (
    SQLITE_OPTIONS,
    database_from_url,
    env_bool,
    env_int,
    env_list,
    env_path,
    env_str,
    env_time_zone,
)

BASE_DIR = Path(__file__).resolve().parent.parent.parent
# Records, evidence files and stored reports live here, outside the source packages.
DATA_DIR = env_path("DURABILITY_DATA_DIR", BASE_DIR / "data")

SECRET_KEY = env_str("SECRET_KEY", "dev-only-key-not-for-production-" + "x" * 20)
DEBUG = env_bool("DEBUG", False)
# production.py sets this; commands that build invented data refuse to run then.
IS_PRODUCTION = False
ALLOWED_HOSTS = env_list("ALLOWED_HOSTS", ["127.0.0.1", "localhost"])

INSTALLED_APPS = [
    "django.contrib.admin",
    "django.contrib.auth",
    "django.contrib.contenttypes",
    "django.contrib.sessions",
    "django.contrib.messages",
    "django.contrib.staticfiles",
    "django_tables2",
    "django_filters",
    "durability.apps.DurabilityConfig",
    "labrecords.apps.LabrecordsConfig",
]

MIDDLEWARE = [
    "django.middleware.security.SecurityMiddleware",
    "django.contrib.sessions.middleware.SessionMiddleware",
    "django.middleware.common.CommonMiddleware",
    "django.middleware.csrf.CsrfViewMiddleware",
    "django.contrib.auth.middleware.AuthenticationMiddleware",
    "django.contrib.messages.middleware.MessageMiddleware",
    "django.middleware.clickjacking.XFrameOptionsMiddleware",
    "labrecords.middleware.LabTimeZoneMiddleware",
]

ROOT_URLCONF = "durability.urls"
WSGI_APPLICATION = "durability.wsgi.application"

TEMPLATES = [
    {
        "BACKEND": "django.template.backends.django.DjangoTemplates",
        "DIRS": [BASE_DIR / "templates"],
        "APP_DIRS": True,
        "OPTIONS": {
            "context_processors": [
                "django.template.context_processors.request",
                "django.contrib.auth.context_processors.auth",
                "django.contrib.messages.context_processors.messages",
                "labrecords.context_processors.lab",
            ],
        },
    },
]

_database_url = env_str("DATABASE_URL", "")
if _database_url:
    DATABASES = {"default": database_from_url(_database_url)}
else:
    # The embedded default needs its folder; created here because SQLite will not.
    DATA_DIR.mkdir(parents=True, exist_ok=True)
    DATABASES = {
        "default": {
            "ENGINE": "django.db.backends.sqlite3",
            "NAME": DATA_DIR / "durability.sqlite3",
            "OPTIONS": dict(SQLITE_OPTIONS),
        }
    }
DEFAULT_AUTO_FIELD = "django.db.models.BigAutoField"

AUTH_PASSWORD_VALIDATORS = [
    {"NAME": "django.contrib.auth.password_validation.UserAttributeSimilarityValidator"},
    {
        "NAME": "django.contrib.auth.password_validation.MinimumLengthValidator",
        "OPTIONS": {"min_length": 12},
    },
    {"NAME": "django.contrib.auth.password_validation.CommonPasswordValidator"},
    {"NAME": "django.contrib.auth.password_validation.NumericPasswordValidator"},
]

LOGIN_URL = "login"
LOGIN_REDIRECT_URL = "labrecords:home"
LOGOUT_REDIRECT_URL = "login"
# A lab shift, not the framework's two weeks (ASVS V7.3 asks for a stated lifetime).
SESSION_COOKIE_AGE = env_int("SESSION_COOKIE_AGE", 12 * 3600)
SESSION_EXPIRE_AT_BROWSER_CLOSE = True

LANGUAGE_CODE = "en"
USE_I18N = False
USE_TZ = True
# Stored in UTC; shown in the lab's time zone.
TIME_ZONE = env_time_zone("LAB_TIME_ZONE", "Europe/Berlin")

# ISO dates everywhere (durability/formats/en/formats.py): locale formats win over the
# DATE_FORMAT settings, so the format module is where they are set.
FORMAT_MODULE_PATH = ["durability.formats"]

STATIC_URL = "static/"
STATICFILES_DIRS = [BASE_DIR / "durability" / "static"]
STATIC_ROOT = env_path("STATIC_ROOT", BASE_DIR / "staticfiles")
MEDIA_ROOT = DATA_DIR / "evidence"

# Uploads: evidence files are limited in size and checked by content elsewhere.
DATA_UPLOAD_MAX_MEMORY_SIZE = 2_621_440
FILE_UPLOAD_MAX_MEMORY_SIZE = 2_621_440
EVIDENCE_MAX_BYTES = env_int("EVIDENCE_MAX_BYTES", 10 * 1024 * 1024)

DJANGO_TABLES2_TEMPLATE = "django_tables2/semantic.html"

# Fallbacks when no lab profile has been recorded (durability.LabProfile).
LAB_NAME = env_str("LAB_NAME", "")
LAB_ADDRESS = env_str("LAB_ADDRESS", "")
# Where the QR code on a report points; the verification page lives under it.
REPORT_VERIFY_BASE_URL = env_str("REPORT_VERIFY_BASE_URL", "http://127.0.0.1:8000")
# MIL-C-48497A sources disagree whether temperature and solvent tests are basic.
MIL_48497_TEMPERATURE_SOLVENT_BASIC = env_bool("MIL_48497_TEMPERATURE_SOLVENT_BASIC", False)

LOGGING = {
    "version": 1,
    "disable_existing_loggers": False,
    "handlers": {"console": {"class": "logging.StreamHandler"}},
    "root": {"handlers": ["console"], "level": env_str("LOG_LEVEL", "WARNING")},
}
