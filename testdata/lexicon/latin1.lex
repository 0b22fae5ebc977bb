recto-lexicon	1
whale	12
caé	2
