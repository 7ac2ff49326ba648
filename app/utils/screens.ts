// Screens that exist in this build; the navigation shows only these (and only those the role may open).
export const BUILT_SCREENS: string[] = ['/']
