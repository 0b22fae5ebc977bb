whale
sea
