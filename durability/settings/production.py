"""Production settings: every secret and host comes from the environment.

Required: SECRET_KEY, ALLOWED_HOSTS, DATABASE_URL (PostgreSQL recommended).
"""

from django.core.exceptions import ImproperlyConfigured

from durability.settings.base import *  # noqa: F403
from durability.settings.env import env_bool, env_int, env_list, env_str

SECRET_KEY = env_str("SECRET_KEY")
if len(SECRET_KEY) < 50 or len(set(SECRET_KEY)) < 5 or SECRET_KEY.startswith("django-insecure-"):
    raise ImproperlyConfigured("SECRET_KEY is too weak: use at least 50 random characters.")
SECRET_KEY_FALLBACKS = env_list("SECRET_KEY_FALLBACKS", [])
ALLOWED_HOSTS = env_list("ALLOWED_HOSTS")
CSRF_TRUSTED_ORIGINS = env_list("CSRF_TRUSTED_ORIGINS", [f"https://{h}" for h in ALLOWED_HOSTS])
DEBUG = False
IS_PRODUCTION = True

# Behind a TLS-terminating proxy that sets X-Forwarded-Proto.
if env_bool("BEHIND_TLS_PROXY", True):
    SECURE_PROXY_SSL_HEADER = ("HTTP_X_FORWARDED_PROTO", "https")
SECURE_SSL_REDIRECT = env_bool("SECURE_SSL_REDIRECT", True)
SESSION_COOKIE_SECURE = True
CSRF_COOKIE_SECURE = True
SESSION_COOKIE_HTTPONLY = True
SECURE_HSTS_SECONDS = env_int("SECURE_HSTS_SECONDS", 31_536_000)
SECURE_HSTS_INCLUDE_SUBDOMAINS = env_bool("SECURE_HSTS_INCLUDE_SUBDOMAINS", True)
SECURE_HSTS_PRELOAD = env_bool("SECURE_HSTS_PRELOAD", False)
SECURE_CONTENT_TYPE_NOSNIFF = True
SECURE_REFERRER_POLICY = "same-origin"
X_FRAME_OPTIONS = "DENY"

SILENCED_SYSTEM_CHECKS = [
    # HSTS preload submits the domain to browsers' built-in lists, which is hard to
    # undo: a decision for the site's owner, not a default. Set
    # SECURE_HSTS_PRELOAD=1 once the site has decided.
    "security.W021",
]

ADMINS = [tuple(a.split(":", 1)) for a in env_list("ADMINS", [])]
