// Where the tests find their database: a separate one from the demo's (scripts/test.sh makes it fresh).
export const TEST_DATABASE_URL = process.env.TEST_DATABASE_URL || 'postgres://postgres@127.0.0.1:54329/isthmus_test'
export const TEST_SESSION_PASSWORD = 'test-only-session-password-0123456789abcdef'
