recto-lexicon	1	3	1
whale	12
sea	7
Café	2
sea	whale	3
