// The same scrypt hasher (and defaults) as nuxt-auth-utils' hashPassword/verifyPassword, for scripts
// that run outside the server (demo seed, tests).
import { Hash } from '@adonisjs/hash'
import { Scrypt } from '@adonisjs/hash/drivers/scrypt'

const hash = new Hash(new Scrypt({}))

export function hashPassword(password: string): Promise<string> {
  return hash.make(password)
}
export function verifyPassword(hashed: string, plain: string): Promise<boolean> {
  return hash.verify(hashed, plain)
}
