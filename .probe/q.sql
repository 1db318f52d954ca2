SELECT r.id, count(rd.*) n FROM run r JOIN reading rd ON rd.run_id=r.id WHERE r.state='in_progress' GROUP BY r.id ORDER BY n DESC LIMIT 3;
