import bcrypt from "bcryptjs";

// bcrypt cost 12: ~250 ms per hash on these machines (common practice for interactive logins).
const COST = 12;

/** Hashes a password with bcrypt (salted, cost 12). */
export const hashPassword = (password: string): Promise<string> => bcrypt.hash(password, COST);

/** True when `password` matches the stored bcrypt hash. */
export const verifyPassword = (password: string, hash: string): Promise<boolean> => bcrypt.compare(password, hash);
