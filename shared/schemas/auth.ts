import { z } from 'zod'

export const LoginBody = z.object({
  email: z.string('Enter your e-mail address.').trim().min(1, 'Enter your e-mail address.').max(254).email('Enter a valid e-mail address.'),
  password: z.string('Enter your password.').min(1, 'Enter your password.').max(256),
})
export type LoginBody = z.infer<typeof LoginBody>
