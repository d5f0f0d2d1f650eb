import { passwordLinkRoute } from '$lib/server/auth/password-links';

const route = passwordLinkRoute('reset');
export const load = route.load;
export const actions = route.actions;
