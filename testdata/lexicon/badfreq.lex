recto-lexicon	1
whale	12
sea	1,2
