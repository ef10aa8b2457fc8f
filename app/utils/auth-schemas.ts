import { z } from "zod";

// Form schemas and rules shared by the browser (inline validation) and the server (the real check).
export const PASSWORD_MIN_LENGTH = 10;

export const signInSchema = z.object({
  email: z.string({ error: "Enter your e-mail address" }).trim().min(1, "Enter your e-mail address").email("Enter a valid e-mail address"),
  password: z.string({ error: "Enter your password" }).min(1, "Enter your password"),
  redirectTo: z.string().optional(),
});

export const newPasswordFields = {
  password: z
    .string({ error: "Choose a password" })
    .min(PASSWORD_MIN_LENGTH, `Use at least ${PASSWORD_MIN_LENGTH} characters`)
    .max(200, "Use at most 200 characters"),
  confirm: z.string({ error: "Type the password again" }).min(1, "Type the password again"),
};
