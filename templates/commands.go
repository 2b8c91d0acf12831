package templates

// HelpNotice ends the command line's help (`stepgate --help`): what
// stepgate is not, and what prevails over it.
const HelpNotice = `It is not a safety certification: follow local codes, the applicable
machinery-safety standards and competent, licensed practice.`
