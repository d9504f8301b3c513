module termgrove

go 1.26.8
